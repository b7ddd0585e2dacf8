/**
 * How screens and sentences write a moment, in the reader's time zone: one
 * style everywhere ("3 Dec 2026", "3 Dec 2026, 17:21"), whatever the
 * browser's locale.
 */
const dateStyle: Intl.DateTimeFormatOptions = { day: "numeric", month: "short", year: "numeric" };

/** "3 Dec 2026" (in `timeZone` when given, e.g. "UTC" for a text that must read the same everywhere) */
export function dateWords(when: string | Date, timeZone?: string): string {
  return new Date(when).toLocaleDateString(
    "en-GB",
    timeZone ? { ...dateStyle, timeZone } : dateStyle,
  );
}

/** "3 Dec 2026, 17:21" */
export function dateTimeWords(when: string | Date): string {
  return new Date(when).toLocaleString("en-GB", {
    ...dateStyle,
    hour: "2-digit",
    minute: "2-digit",
  });
}
