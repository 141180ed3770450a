/** A moment as pages show it: minutes, in UTC, e.g. "2026-06-01 08:00 UTC". */
export function formatTimestamp(at: Date): string {
  return `${at.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}
