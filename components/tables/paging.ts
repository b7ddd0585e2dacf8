/**
 * Paging arithmetic for the data table: which rows a page shows and the
 * words that say so ("rows 1–50 of 2,000"). Page indices count from 0.
 */
import { formatCount } from "../charts/number-format";

/** Page sizes offered by the page-size selector. */
export const pageSizeOptions = [25, 50, 100, 250] as const;

export interface PageWindow {
  /** The page index actually shown (clamped into range). */
  pageIndex: number;
  /** Number of pages (at least 1, even for no rows). */
  pageCount: number;
  /** 1-based number of the first row shown (0 when there are no rows). */
  first: number;
  /** 1-based number of the last row shown (0 when there are no rows). */
  last: number;
  /** "rows 1–50 of 2,000", "row 7 of 7", "no rows". */
  label: string;
}

/** Number of pages for `total` rows of `pageSize` (at least 1). Throws a RangeError for a page size below 1. */
export function pageCountFor(total: number, pageSize: number): number {
  if (!(Number.isInteger(pageSize) && pageSize >= 1))
    throw new RangeError(`pageSize must be a whole number of at least 1 (got ${pageSize})`);
  return Math.max(1, Math.ceil(Math.max(0, total) / pageSize));
}

/** Clamps `pageIndex` into [0, pageCount − 1]. */
export function clampPageIndex(pageIndex: number, total: number, pageSize: number): number {
  const count = pageCountFor(total, pageSize);
  if (!Number.isFinite(pageIndex)) return 0;
  return Math.min(count - 1, Math.max(0, Math.floor(pageIndex)));
}

/** The rows page `pageIndex` shows out of `total`, and the label for them. Cost O(1). */
export function pageWindow(total: number, pageIndex: number, pageSize: number): PageWindow {
  const rows = Math.max(0, Math.floor(total));
  const pageCount = pageCountFor(rows, pageSize);
  const index = clampPageIndex(pageIndex, rows, pageSize);
  if (rows === 0) return { pageIndex: 0, pageCount, first: 0, last: 0, label: "no rows" };
  const first = index * pageSize + 1;
  const last = Math.min(rows, (index + 1) * pageSize);
  const label =
    first === last
      ? `row ${formatCount(first)} of ${formatCount(rows)}`
      : `rows ${formatCount(first)}–${formatCount(last)} of ${formatCount(rows)}`;
  return { pageIndex: index, pageCount, first, last, label };
}

/** The page that holds 0-based row `rowIndex`, to keep a row in view when the page size changes. */
export function pageOfRow(rowIndex: number, pageSize: number): number {
  if (!(Number.isInteger(pageSize) && pageSize >= 1))
    throw new RangeError(`pageSize must be a whole number of at least 1 (got ${pageSize})`);
  return Math.max(0, Math.floor(rowIndex / pageSize));
}
