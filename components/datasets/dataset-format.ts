/**
 * Words and numbers of the Data screen: kinds, people, sizes, hashes,
 * roster statuses, and the window of columns a wide table shows at once.
 */
import { formatCount } from "../charts/number-format";
import type { DatasetKind, PersonRef } from "../../hooks/use-datasets";
import type { RosterRow, RosterStatus } from "../../hooks/use-roster";

export const kindLabel: Record<DatasetKind, string> = {
  brain: "Brain table",
  participants: "Participant sheet",
};

/** First 12 hex digits of a SHA-256, enough to tell versions apart by eye. */
export function shortHash(sha256: string): string {
  return sha256.slice(0, 12);
}

/** "812 bytes", "13.1 kB", "8.40 MB" (powers of 1,000). */
export function formatBytes(bytes: number): string {
  if (!Number.isFinite(bytes) || bytes < 0) return "n/a";
  if (bytes < 1000) return `${formatCount(bytes)} byte${bytes === 1 ? "" : "s"}`;
  const units = ["kB", "MB", "GB"];
  let value = bytes / 1000;
  let unit = 0;
  while (value >= 1000 && unit < units.length - 1) {
    value /= 1000;
    unit += 1;
  }
  return `${value.toPrecision(3)} ${units[unit]}`;
}

/** A person's name, else e-mail address, else "someone". */
export function personName(person: PersonRef | null | undefined): string {
  return person?.name ?? person?.email ?? "someone";
}

/** A time in the reader's locale. */
export function formatWhen(iso: string): string {
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : date.toLocaleString();
}

/** "1 participant", "71 participants". */
export function plural(count: number, one: string, many = `${one}s`): string {
  return `${formatCount(count)} ${count === 1 ? one : many}`;
}

export const statusLabel: Record<RosterStatus, string> = {
  matched: "matched",
  "only-in-brain-table": "only in brain table",
  "only-in-participant-sheet": "only in sheet",
};

/** How a matched row was joined, in words; empty for unmatched rows. */
export function viaLabel(via: RosterRow["via"]): string {
  if (via === "identical") return "same id";
  if (via === "rule") return "id rule";
  if (via === "mapping") return "confirmed mapping";
  return "";
}

export interface ColumnWindow {
  start: number;
  end: number;
  /** "columns 1–30 of 801" or "all 8 columns". */
  label: string;
}

/**
 * The columns [start, end) shown of `total` when at most `size` fit at once;
 * `start` is clamped to a multiple of `size` inside the range.
 */
export function columnWindow(total: number, start: number, size: number): ColumnWindow {
  if (!(Number.isInteger(size) && size >= 1))
    throw new RangeError(`size must be a whole number of at least 1 (got ${size})`);
  const n = Math.max(0, Math.floor(total));
  if (n <= size) return { start: 0, end: n, label: `all ${plural(n, "column")}` };
  const lastStart = Math.floor((n - 1) / size) * size;
  const s = Math.min(lastStart, Math.max(0, Math.floor(start / size) * size));
  const end = Math.min(n, s + size);
  return {
    start: s,
    end,
    label: `columns ${formatCount(s + 1)}–${formatCount(end)} of ${formatCount(n)}`,
  };
}
