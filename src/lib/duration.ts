/** "4 s", "3 min 20 s", "2 h 05 min": how long something has been in its state. */
export function formatDuration(ms: number): string {
  if (!Number.isFinite(ms)) return "—";
  // The server's clock may run a little ahead of this screen's: "just now", not a dash.
  if (ms < 0) return "0 s";
  const s = Math.floor(ms / 1000);
  if (s < 60) return `${s} s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m} min ${String(s % 60).padStart(2, "0")} s`;
  const h = Math.floor(m / 60);
  return `${h} h ${String(m % 60).padStart(2, "0")} min`;
}

// One formatter for the whole app: toLocaleTimeString builds a new one per call, which the
// event ticker would do hundreds of times a second under load.
const TIME_OF_DAY = new Intl.DateTimeFormat("en-GB", { hour: "2-digit", minute: "2-digit", second: "2-digit" });

/** Time of day with seconds, e.g. "10:15:03". */
export function formatTime(iso: string | number): string {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) return String(iso);
  return TIME_OF_DAY.format(date);
}

/** A measured duration given in seconds: "18.5 s" under a minute, else as {@link formatDuration}. */
export function formatSeconds(seconds: number): string {
  if (seconds < 60) return `${Number(seconds.toFixed(1))} s`;
  return formatDuration(seconds * 1000);
}
