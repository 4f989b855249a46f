/**
 * The guided junction form's values and how they become a template's options. The values
 * carry each route's line so the selects can offer only detectors and signals of that line;
 * the options are what `POST /api/templates/:id` takes (checked by the shared schemas).
 */
import type { ValidationError } from "@shared/rulebook/validate";
import { toJsonPath } from "@shared/rulebook/validate";
import { guessExit, guessRoad, guessRoute, type RoleRecords } from "../../lib/junctionRoles";

export type JunctionKind = "converging-priority" | "converging-first-come" | "facing-power" | "facing-hand";

export const JUNCTION_KINDS: { id: JunctionKind; template: string; label: string; help: string }[] = [
  { id: "converging-priority", template: "converging-junction", label: "Converging, in priority order", help: "routes join one section; the priority route goes first whenever it has a train waiting" },
  { id: "converging-first-come", template: "converging-junction", label: "Converging, first come first served", help: "routes join one section; waiting routes take turns in the order their trains arrived" },
  { id: "facing-power", template: "facing-junction", label: "Facing, power-worked points", help: "one signal before facing points; the rulebook picks the first free road and throws the points" },
  { id: "facing-hand", template: "facing-junction", label: "Facing, hand-worked points", help: "one signal before facing points set by a person; the signal clears for the road they lie for" },
];

export interface RouteValues {
  id: string;
  line: string;
  signal: string;
  approach: string[];
  entry: string;
  exit: string[];
}
export interface RoadValues {
  id: string;
  line: string;
  exit: string[];
}
export interface JunctionValues {
  kind: JunctionKind;
  /** Converging: the line the joined section runs along (its exit detectors are on it). */
  sectionLine: string;
  priority: string;
  routes: RouteValues[];
  /** Facing: the line of the signal and its approach; exactly two roads, the points' normal road first. */
  line: string;
  signal: string;
  approach: string[];
  entry: string;
  points: string;
  roads: RoadValues[];
  maxAxles: number;
  maxTrainsPerRoute: number;
}

const list = (v: unknown): string[] => (Array.isArray(v) ? v.map(String) : typeof v === "string" && v ? [v] : []);

/** A route on `line`, its exits guessed beyond every detector the routes use on the section's line. */
export function routeFor(records: RoleRecords, line: string, sectionLine: string, id: string, usedByOthers: readonly string[] = []): RouteValues {
  const guess = guessRoute(records, line);
  return { id, line, ...guess, exit: guessExit(records, sectionLine, [guess.entry, ...guess.approach, ...usedByOthers]) };
}

/** Sensible first values: one route per line (the first line is the section), or roads per line. */
export function initialValues(records: RoleRecords & { lines: { id: string }[] }, kind: JunctionKind, axles: number): JunctionValues {
  const lines = records.lines.map((l) => l.id);
  const first = lines[0] ?? "";
  const routeLines = (lines.length >= 2 ? lines : [first, first]).slice(0, 4);
  const used = routeLines.flatMap((line) => {
    const g = guessRoute(records, line);
    return [g.entry, ...g.approach];
  });
  const routes = routeLines.map((line, i) => routeFor(records, line, first, lines.length >= 2 ? line : `route${i + 1}`, used));
  const facing = guessRoute(records, first);
  const entry = records.detectors.find((d) => d.id === facing.entry);
  const roadLines = lines.length >= 2 ? lines.slice(0, 2) : [first, first];
  return {
    kind,
    sectionLine: first,
    priority: routes[0]?.id ?? "",
    routes,
    line: first,
    ...facing,
    points: records.points[0]?.id ?? "",
    roads: roadLines.map((line, i) => ({ id: lines.length >= 2 ? line : `road${i + 1}`, line, exit: guessRoad(records, line, entry).slice(0, 2) })),
    maxAxles: axles,
    maxTrainsPerRoute: 2,
  };
}

export function templateOf(kind: JunctionKind): string {
  return JUNCTION_KINDS.find((k) => k.id === kind)!.template;
}

/** The template options from the form's values (lines dropped: the template needs only ids). */
export function optionsOf(v: JunctionValues): Record<string, unknown> {
  const size = { maxAxles: Number(v.maxAxles), maxTrainsPerRoute: Number(v.maxTrainsPerRoute) };
  if (v.kind === "converging-priority" || v.kind === "converging-first-come") {
    return {
      routes: v.routes.map((r) => ({ id: r.id, signal: r.signal, approach: list(r.approach), entry: r.entry, exit: list(r.exit) })),
      order: v.kind === "converging-priority" ? "priority" : "first-come",
      ...(v.kind === "converging-priority" ? { priority: v.priority } : {}),
      ...size,
    };
  }
  return {
    signal: v.signal,
    approach: list(v.approach),
    entry: v.entry,
    points: v.points,
    roads: v.roads.map((r) => ({ id: r.id, exit: list(r.exit) })),
    worked: v.kind === "facing-hand" ? "hand" : "power",
    ...size,
  };
}

/**
 * An options error (`$.options.routes[1].signal`, or `$.routes[1].signal` from a local check)
 * as the form field it belongs to (`routes.1.signal`); list items point at their list.
 */
export function fieldOfPath(path: string): string {
  const rest = path.replace(/^\$(\.options)?\.?/, "");
  const parts = rest.split(/\.|\[|\]/).filter(Boolean);
  // `approach[0]` is about the approach list as a whole in this form.
  if (parts.length >= 2 && /^\d+$/.test(parts[parts.length - 1]) && ["approach", "exit"].includes(parts[parts.length - 2])) parts.pop();
  return parts.join(".") || "root";
}

export function localErrors(issues: { path: PropertyKey[]; message: string }[]): ValidationError[] {
  return issues.map((i) => ({ path: toJsonPath(i.path), message: i.message }));
}
