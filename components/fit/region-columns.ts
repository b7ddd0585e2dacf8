/**
 * The region table's columns, kept free of React Native so they can be
 * tested on their own. Six key columns are always shown — region,
 * estimate, 95% CI, p, adjusted p, flags — sized so that all six fit a
 * phone's width; the others (N, statistic, df, standard error, r and its
 * interval, effect sizes, the weighted fit's τ² and I²) are offered by the
 * column chooser when at least one region has a value for them.
 */
import { formatInterval, MISSING } from "../charts/number-format";
import type { RegionResult } from "../../contract/spec";

export const keyRegionColumns = ["region", "estimate", "interval", "p", "pAdjusted", "flags"];

/** An optional column: its id (stored in the person's preference), words, and how a region's value is read. */
export interface OptionalRegionColumn {
  id: string;
  label: string;
  /** A number, or the text of an interval. */
  kind: "number" | "interval";
  read: (r: RegionResult) => number | string | null;
  digits?: number;
  decimals?: number;
}

/** A number, or the `value` of an `{ value, ciLow, ciHigh }` object; anything else is missing. */
function numberOf(value: unknown): number | null {
  if (typeof value === "number" && Number.isFinite(value)) return value;
  if (value && typeof value === "object") {
    const inner = (value as { value?: unknown }).value;
    if (typeof inner === "number" && Number.isFinite(inner)) return inner;
  }
  return null;
}

/** A region's extra, at its top level or under `extras`. */
function extra(r: RegionResult, key: string): unknown {
  if (r[key] !== undefined) return r[key];
  const extras = r.extras as Record<string, unknown> | undefined;
  return extras?.[key];
}

/** "low to high", or n/a when either end is missing. */
export function intervalText(low: unknown, high: unknown): string {
  const a = numberOf(low);
  const b = numberOf(high);
  return a === null || b === null ? MISSING : formatInterval(a, b);
}

function effectInterval(r: RegionResult, key: string): string | null {
  const value = extra(r, key) as { ciLow?: unknown; ciHigh?: unknown } | undefined;
  if (!value || typeof value !== "object") return null;
  const text = intervalText(value.ciLow, value.ciHigh);
  return text === MISSING ? null : text;
}

export const optionalRegionColumns: readonly OptionalRegionColumn[] = [
  { id: "n", label: "N", kind: "number", read: (r) => r.n, decimals: 0 },
  { id: "statistic", label: "Statistic", kind: "number", read: (r) => r.statistic },
  { id: "df", label: "df", kind: "number", read: (r) => r.df, digits: 4 },
  { id: "se", label: "Standard error", kind: "number", read: (r) => r.se },
  { id: "r", label: "r", kind: "number", read: (r) => numberOf(r.r) },
  {
    id: "rInterval",
    label: "95% CI of r",
    kind: "interval",
    read: (r) => {
      const text = intervalText(r.rCiLow, r.rCiHigh);
      return text === MISSING ? null : text;
    },
  },
  { id: "cohensD", label: "Cohen's d", kind: "number", read: (r) => numberOf(extra(r, "cohensD")) },
  {
    id: "cohensDInterval",
    label: "95% CI of d",
    kind: "interval",
    read: (r) => effectInterval(r, "cohensD"),
  },
  { id: "hedgesG", label: "Hedges' g", kind: "number", read: (r) => numberOf(extra(r, "hedgesG")) },
  { id: "tau2", label: "τ²", kind: "number", read: (r) => numberOf(extra(r, "tau2")) },
  {
    id: "i2",
    label: "I² (%)",
    kind: "number",
    read: (r) => {
      const i2 = numberOf(extra(r, "i2"));
      return i2 === null ? null : i2 * 100;
    },
    decimals: 1,
  },
];

/** The optional columns at least one of these regions has a value for, in the chooser's order. */
export function availableOptionalColumns(regions: readonly RegionResult[]): OptionalRegionColumn[] {
  return optionalRegionColumns.filter((c) => regions.some((r) => c.read(r) !== null));
}

/** Columns shown before the person chooses: none on a phone (the six key columns fill it), N, statistic and df on a wide screen. */
export function defaultOptionalColumns(wide: boolean): string[] {
  return wide ? ["n", "statistic", "df"] : [];
}

/** Flags of a region: outliers, high-leverage and influential participants, added up. */
export function flagTotal(r: RegionResult): number {
  const f = r.flagged as { outlier?: number; leverage?: number; influence?: number } | undefined;
  return f ? (f.outlier ?? 0) + (f.leverage ?? 0) + (f.influence ?? 0) : 0;
}
