/** A time in s as a reader takes it in: us below 1 ms, ms below 1 s, else s; three significant digits. */
export function formatTime(seconds: number): string {
  if (seconds < 1e-3) return `${(seconds * 1e6).toPrecision(3)} us`;
  if (seconds < 1) return `${(seconds * 1e3).toPrecision(3)} ms`;
  return `${seconds.toPrecision(3)} s`;
}
