/**
 * The Data screen's reliability section without React Native: the rows of
 * the brain-reliability table, and the checks of the trait-reliability form
 * (the same rules the API applies, so a person sees each problem beside its
 * field before saving). Tested on its own.
 */
import { formatFixed } from "../charts/number-format";

export interface IccInterval {
  value: number;
  ciLow: number | null;
  ciHigh: number | null;
}

export interface RegionReliabilityInput {
  region: string;
  n: number;
  sessions: number;
  icc21: IccInterval;
  icc31: IccInterval;
}

export interface ReliabilityRow {
  region: string;
  n: number | null;
  sessions: number | null;
  icc31: number | null;
  icc31Interval: string;
  icc21: number | null;
  icc21Interval: string;
  /** Why the region has no values, or null. */
  problem: string | null;
}

/** "0.34 to 0.95"; an unbounded lower limit reads "unbounded below to 0.95". */
export function intervalText(i: IccInterval): string {
  const low = i.ciLow === null ? "unbounded below" : formatFixed(i.ciLow, 2);
  const high = i.ciHigh === null ? "unbounded" : formatFixed(i.ciHigh, 2);
  return `${low} to ${high}`;
}

/** One table row per region; regions whose coefficients could not be computed keep their reason. */
export function reliabilityRows(
  regions: readonly (RegionReliabilityInput | { region: string; error: string })[],
): ReliabilityRow[] {
  return regions.map((r) =>
    "error" in r
      ? {
          region: r.region,
          n: null,
          sessions: null,
          icc31: null,
          icc31Interval: "n/a",
          icc21: null,
          icc21Interval: "n/a",
          problem: r.error,
        }
      : {
          region: r.region,
          n: r.n,
          sessions: r.sessions,
          icc31: r.icc31.value,
          icc31Interval: intervalText(r.icc31),
          icc21: r.icc21.value,
          icc21Interval: intervalText(r.icc21),
          problem: null,
        },
  );
}

/** A row of the trait-reliability form as typed. */
export interface TraitDraft {
  /** Stable key of the row in the form. */
  key: string;
  column: string;
  reliability: string;
  source: string;
}

export interface TraitEntry {
  column: string;
  reliability: number;
  source: string;
}

export type DraftProblems = Record<
  string,
  Partial<Record<"column" | "reliability" | "source", string>>
>;

/** Reads a typed reliability: a number with a point as the decimal mark, greater than 0 and at most 1. */
export function parseReliability(text: string): { value: number } | { problem: string } {
  const t = text.trim();
  if (t === "")
    return {
      problem: "Give the reliability, a number greater than 0 and at most 1 (for example 0.82).",
    };
  if (/^[+-]?\d*,\d+$/.test(t))
    return { problem: "Use a point as the decimal mark (for example 0.82)." };
  if (!/^[+-]?(\d+\.?\d*|\.\d+)$/.test(t)) return { problem: `"${t}" is not a number.` };
  const value = Number(t);
  if (!(value > 0)) return { problem: "A reliability must be greater than 0." };
  if (value > 1) return { problem: "A reliability is at most 1." };
  return { value };
}

/**
 * Checks every row: a numeric column of the participant sheet, each at most
 * once; a reliability in (0, 1]; a source in words. Returns the entries to
 * save when there is no problem, else null and the problems by row key.
 */
export function checkTraitDrafts(
  drafts: readonly TraitDraft[],
  numericColumns: readonly string[],
): { entries: TraitEntry[] | null; problems: DraftProblems } {
  const problems: DraftProblems = {};
  const entries: TraitEntry[] = [];
  const seen = new Set<string>();
  const add = (key: string, field: "column" | "reliability" | "source", message: string) => {
    problems[key] = { ...problems[key], [field]: message };
  };
  for (const d of drafts) {
    const column = d.column.trim();
    if (column === "") add(d.key, "column", "Choose a trait of the participant sheet.");
    else if (!numericColumns.includes(column))
      add(d.key, "column", `"${column}" is not a numeric column of the current participant sheet.`);
    else if (seen.has(column)) add(d.key, "column", `"${column}" is listed twice.`);
    seen.add(column);
    const rel = parseReliability(d.reliability);
    if ("problem" in rel) add(d.key, "reliability", rel.problem);
    const source = d.source.trim();
    if (source === "")
      add(
        d.key,
        "source",
        "Say where the value comes from (for example: test–retest r = .82, manual of the scale).",
      );
    if (!problems[d.key] && "value" in rel)
      entries.push({ column, reliability: rel.value, source });
  }
  return Object.keys(problems).length > 0 ? { entries: null, problems } : { entries, problems };
}

/** Server-side problems (`details: [{ field: "body.1.column", message }]`) mapped onto the form's rows. */
export function problemsFromDetails(
  drafts: readonly TraitDraft[],
  details: unknown,
): DraftProblems {
  const problems: DraftProblems = {};
  if (!Array.isArray(details)) return problems;
  for (const d of details) {
    const m = /^body\.(\d+)\.(column|reliability|source)$/.exec(
      String((d as { field?: unknown }).field ?? ""),
    );
    const row = m ? drafts[Number(m[1])] : undefined;
    if (!m || !row) continue;
    const field = m[2] as "column" | "reliability" | "source";
    problems[row.key] = {
      ...problems[row.key],
      [field]: String((d as { message?: unknown }).message ?? ""),
    };
  }
  return problems;
}
