/** Local date and time for version lists and logs, e.g. "2 May 2026, 11:15". */
export function formatDateTime(iso: string): string {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) return iso;
  return date.toLocaleString("en-GB", {
    day: "numeric",
    month: "short",
    year: "numeric",
    hour: "2-digit",
    minute: "2-digit",
  });
}

/** Simulator clock in seconds with millisecond precision, e.g. "12.350 s". */
export function formatClock(ms: number): string {
  return `${(ms / 1000).toFixed(3)} s`;
}

/** Local date and time with seconds, e.g. "2 May 2026, 11:15:03". */
export function formatDateTimeSeconds(iso: string): string {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) return iso;
  return date.toLocaleString("en-GB", { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit", second: "2-digit" });
}

