/**
 * Which of a layout's detectors and signals may fill each role of a junction template, and
 * a first guess from their positions, so the guided form opens already filled in sensibly.
 *
 * Roles follow the line: a route's signal, approach and entry are on the route's own line
 * (approach before the signal, entry level with it); exits are on the line the junction's
 * section continues along. Only those of the right line are offered.
 */
import type { LayoutDetector, LayoutPoints, LayoutSignal } from "@shared/layout/schema";

export interface RoleRecords {
  detectors: LayoutDetector[];
  signals: LayoutSignal[];
  points: LayoutPoints[];
}

const byAt = <T extends { at: number }>(list: T[]) => [...list].sort((a, b) => a.at - b.at);

export function detectorsOn(records: RoleRecords, line: string): LayoutDetector[] {
  return byAt(records.detectors.filter((d) => d.line === line));
}

export function signalsOn(records: RoleRecords, line: string): LayoutSignal[] {
  return byAt(records.signals.filter((s) => s.line === line));
}

export interface RouteGuess {
  signal: string;
  approach: string[];
  entry: string;
}

/**
 * A route on `line`: its last signal, the detector nearest that signal as entry, and the
 * first detector before the entry as the approach. Empty strings where nothing fits.
 */
export function guessRoute(records: RoleRecords, line: string): RouteGuess {
  const signal = signalsOn(records, line).at(-1);
  const detectors = detectorsOn(records, line);
  if (!signal) return { signal: "", approach: detectors[0] ? [detectors[0].id] : [], entry: detectors[1]?.id ?? "" };
  const entry = [...detectors].sort((a, b) => Math.abs(a.at - signal.at) - Math.abs(b.at - signal.at))[0];
  const before = detectors.filter((d) => entry && d.at < entry.at);
  return { signal: signal.id, approach: before[0] ? [before[0].id] : [], entry: entry?.id ?? "" };
}

/**
 * Exit detectors on the section's line beyond everything the routes use there (beyond the
 * fouling point): the first such detector.
 */
export function guessExit(records: RoleRecords, sectionLine: string, used: readonly string[]): string[] {
  const detectors = detectorsOn(records, sectionLine);
  const usedAts = detectors.filter((d) => used.includes(d.id)).map((d) => d.at);
  const beyond = detectors.filter((d) => !used.includes(d.id) && d.at > Math.max(-Infinity, ...usedAts));
  return beyond[0] ? [beyond[0].id] : [];
}

/** Road exits for a facing junction: on the road's line, beyond the entry when it is the same line. */
export function guessRoad(records: RoleRecords, line: string, entry: { line: string; at: number } | undefined): string[] {
  const detectors = detectorsOn(records, line).filter((d) => !entry || d.line !== entry.line || d.at > entry.at);
  return detectors.map((d) => d.id);
}
