/**
 * The recipe command's check of first-level standard errors before a fit
 * weighted by them (`weights: "first-level-se"`).
 *
 * The rule is the engine's (run-fit.ts): every participant who has a
 * contrast value in a fitted region, in the fitted session, and is not set
 * aside there, needs a standard error greater than 0. Such participants are
 * refused, never dropped. Here the refusal names the brain-table file, the
 * spreadsheet row and the standard-error column, which the engine cannot
 * know. (Standard errors that are present but not > 0 are already refused
 * by the intake when the table is read.)
 *
 * Pure; cost O(participants × regions), plus one pass over the rows of a
 * long table.
 */
import { parseCategoryCell, quoteCell as quote } from "../intake/cells";
import { findColumn } from "../intake/columns";
import { IntakeError, type Problem, problem } from "../intake/errors";
import type { BrainTable } from "../intake/brain-table";
import { type RawTable, tableRows } from "../intake/read-table";
import type { FitData } from "../../contract/spec";

export interface StandardErrorCheckInput {
  /** The brain table's raw rows (for row numbers in the long layout). */
  raw: RawTable;
  brain: BrainTable;
  /** The joined numbers the fit runs on. */
  data: FitData;
  /** The fitted session, or null when the table has none. */
  session: string | null;
  /** Participants set aside: from every region (`region` undefined) or from one. */
  setAside: readonly { participant: string; region?: string }[];
}

/**
 * Throws IntakeError (422) listing every participant of every fitted region
 * that would enter a weighted fit without a standard error (or every region
 * without a standard-error column), each with file, row and column.
 */
export function requireStandardErrors(input: StandardErrorCheckInput): void {
  const { raw, brain, data, session, setAside } = input;
  const file = brain.file;
  const problems: Problem[] = [];
  const asideAll = new Set(
    setAside.filter((s) => s.region === undefined).map((s) => s.participant),
  );
  const asideIn = (region: string, id: string) =>
    asideAll.has(id) || setAside.some((s) => s.region === region && s.participant === id);

  const rowOfEntry = new Map<string, number>();
  for (const e of brain.entries) rowOfEntry.set(`${e.id}\u0000${e.session ?? ""}`, e.row);
  // Long layout: the row of each (participant, session, region).
  const longRow = new Map<string, number>();
  if (brain.layout === "long") {
    const idIndex = findColumn(raw, brain.idColumn);
    const sessionIndex = brain.sessionColumn === null ? -1 : findColumn(raw, brain.sessionColumn);
    const regionIndex = findColumn(raw, "region");
    tableRows(raw).forEach((row, i) => {
      const id = parseCategoryCell(row[idIndex]);
      const region = parseCategoryCell(row[regionIndex]);
      const s = sessionIndex >= 0 ? parseCategoryCell(row[sessionIndex]) : null;
      if (id !== null && region !== null)
        longRow.set(`${id}\u0000${s ?? ""}\u0000${region}`, raw.rowNumbers[i]);
    });
  }
  const longSeColumn = brain.columns.find((c) => c.role === "se")?.name;

  data.regions.forEach((region, r) => {
    const se = data.standardErrors?.[r] ?? null;
    const column =
      brain.layout === "long"
        ? longSeColumn
        : brain.columns.find((c) => c.role === "se" && c.region === region)?.name;
    if (se === null || column === undefined) {
      const expected = brain.layout === "long" ? "se" : `${region}${brain.seSuffix}`;
      problems.push(
        problem(
          file,
          "missing_standard_errors",
          `no standard-error column for region ${quote(region)}; weights "first-level-se" need one (expected a column named ${quote(expected)})`,
          { row: 1 },
        ),
      );
      return;
    }
    const values = data.values[r];
    data.participants.forEach((id, i) => {
      if (!Number.isFinite(values[i]) || asideIn(region, id)) return;
      if (Number.isFinite(se[i]) && se[i] > 0) return;
      const key = `${id}\u0000${session ?? ""}`;
      const row =
        brain.layout === "long" ? longRow.get(`${key}\u0000${region}`) : rowOfEntry.get(key);
      const inSession = session === null ? "" : ` in session ${quote(session)}`;
      problems.push(
        problem(
          file,
          "missing_standard_error",
          `participant ${quote(id)}${inSession} has a value in region ${quote(region)} but no standard error; weights "first-level-se" need one for every participant with a value (fill it in, or set the participant aside)`,
          { ...(row !== undefined ? { row } : {}), column },
        ),
      );
    });
  });
  if (problems.length > 0) throw new IntakeError(422, problems);
}
