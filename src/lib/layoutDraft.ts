/**
 * The layout being edited in the workbench: its records and drawing as one immutable
 * document (so one undo history covers tables and schematic), and the file sent to
 * `PUT /api/layouts/:slug` (CONTRACT.md §6: a layout file without `rulebook`, plus `revision`).
 */
import type { LayoutDetail } from "@shared/contract/rest";
import { canonicalLayout } from "@shared/layout/canonical";
import { LAYOUT_FORMAT, type LayoutNode } from "@shared/layout/schema";
import { RULEBOOK_FORMAT } from "@shared/rulebook/schema";
import { validateLayoutFile, type ValidationError } from "@shared/rulebook/validate";
import { migrateForEditing, type DrawingDoc } from "../components/schematic/edits";
import { parseSchematic, serializeSchematic } from "../components/schematic/format";

/** Nodes may list the points they report or drive (CONTRACT.md §3). */
export type DraftNode = LayoutNode & { points?: string[] };

export interface LayoutDraft extends DrawingDoc {
  slug: string;
  name: string;
  scale: { name: string; ratio: number };
  nodes: DraftNode[];
}

/** `GET /api/layouts/:slug`: records, schematic and the `revision` to send back (CONTRACT.md §6). */
export type EditableLayout = LayoutDetail;

export function draftFromLayout(layout: EditableLayout): { draft: LayoutDraft; movedItems: number } {
  const base: LayoutDraft = {
    slug: layout.slug,
    name: layout.name,
    scale: { ...layout.scale },
    lines: layout.lines.map((l) => ({ ...l })),
    detectors: layout.detectors.map((d) => ({ ...d })),
    signals: layout.signals.map((s) => ({ ...s, aspects: [...s.aspects] })),
    points: layout.points.map((p) => ({ ...p })),
    nodes: layout.nodes.map((n) => ({ id: n.id, name: n.name, detectors: [...n.detectors], signals: [...n.signals], ...(n.points ? { points: [...n.points] } : {}) })),
    schematic: parseSchematic(layout.schematic),
  };
  const { doc, moved } = migrateForEditing(base);
  return { draft: { ...base, schematic: doc.schematic }, movedItems: moved };
}

/** The draft as a layout file without rulebook (keys in the order of CONTRACT.md §3). */
export function layoutFileFromDraft(draft: LayoutDraft): Record<string, unknown> {
  const ids = { detectors: draft.detectors.map((d) => d.id), signals: draft.signals.map((s) => s.id), points: draft.points.map((p) => p.id) };
  return canonicalLayout({
    format: LAYOUT_FORMAT,
    slug: draft.slug,
    name: draft.name,
    scale: draft.scale,
    lines: draft.lines,
    detectors: draft.detectors,
    signals: draft.signals,
    points: draft.points,
    nodes: draft.nodes,
    schematic: serializeSchematic(draft.schematic, ids),
  });
}

/**
 * The draft's own problems (shape and cross-references: a detector on a missing line, a node
 * serving a missing signal), with the paths the server would give. The live rulebook is the
 * server's check.
 */
export function draftErrors(draft: LayoutDraft): ValidationError[] {
  const file = { ...layoutFileFromDraft(draft), rulebook: { format: RULEBOOK_FORMAT, rules: [] } };
  const result = validateLayoutFile(file);
  if (result.ok) return [];
  // A layout just made has no lines yet and may be saved so; a file to import needs one.
  return result.errors.filter((e) => !e.path.startsWith("$.rulebook") && !(e.path === "$.lines" && draft.lines.length === 0));
}
