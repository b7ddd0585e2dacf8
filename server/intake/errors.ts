/**
 * The intake's one failure contract.
 *
 * Every refusal of an uploaded file — by the app's upload routes and by the
 * recipe command alike — is an `IntakeError` carrying one or more problems.
 * Each problem names the file and, where it applies, the row and column, and
 * says what was expected:
 *
 *     brain.csv row 17, column L_insula: "O.42" is not a number
 *
 * Status codes:
 * - 400 — the bytes cannot be read as a delimited text table (empty file,
 *   header only, duplicate or empty header name, ragged rows, unknown
 *   delimiter, broken quotes, binary file or spreadsheet renamed .csv,
 *   invalid UTF-8);
 * - 413 — more bytes or columns than the limits;
 * - 422 — the table reads, but its content is not what was asked for
 *   (a cell that is not a number, a duplicate participant, an unknown
 *   column, an identifier column left undecided, a bad id mapping).
 *
 * Row numbering: row n is the n-th record of the file as a spreadsheet shows
 * it — the header is row 1, the first data record row 2, and blank lines
 * count as rows (they are skipped, but do not shift later numbers). A quoted
 * field that spans several lines belongs to one row.
 */
import type { IntakeProblem } from "../../contract/views/datasets";

/** One problem of an input file (contract/views/datasets.ts, where the web app reads it too). */
export type Problem = IntakeProblem;

export type IntakeStatus = 400 | 413 | 422;

/** At most this many problems are carried by one error (the count of the rest is kept). */
export const MAX_PROBLEMS = 100;

export class IntakeError extends Error {
  readonly status: IntakeStatus;
  readonly problems: readonly Problem[];
  /** How many problems were found in all, including those not carried. */
  readonly problemCount: number;

  constructor(status: IntakeStatus, problems: readonly Problem[], problemCount = problems.length) {
    if (problems.length === 0) throw new TypeError("IntakeError requires at least one problem");
    const more = problemCount - 1;
    super(
      more > 0
        ? `${problems[0].message} (and ${more} more problem${more === 1 ? "" : "s"})`
        : problems[0].message,
    );
    this.name = "IntakeError";
    this.status = status;
    this.problems = problems.slice(0, MAX_PROBLEMS);
    this.problemCount = Math.max(problemCount, problems.length);
  }
}

/**
 * Builds a problem whose message starts with the place it names:
 * `file`, `file row R`, `file column C`, or `file row R, column C`.
 */
export function problem(
  file: string,
  code: string,
  text: string,
  where: { row?: number; column?: string } = {},
): Problem {
  const parts: string[] = [];
  if (where.row !== undefined) parts.push(`row ${where.row}`);
  if (where.column !== undefined) parts.push(`column ${where.column}`);
  const place = parts.length > 0 ? `${file} ${parts.join(", ")}` : file;
  const p: Problem = { file, code, message: `${place}: ${text}` };
  if (where.row !== undefined) p.row = where.row;
  if (where.column !== undefined) p.column = where.column;
  return p;
}

/**
 * Collects problems while a table is checked, keeping the first
 * `MAX_PROBLEMS` and counting the rest, then throws them as one error.
 */
export class ProblemList {
  private readonly items: Problem[] = [];
  private total = 0;

  add(p: Problem): void {
    this.total += 1;
    if (this.items.length < MAX_PROBLEMS) this.items.push(p);
  }

  get count(): number {
    return this.total;
  }

  get list(): readonly Problem[] {
    return this.items;
  }

  /** Throws an IntakeError with every collected problem, if there is any. */
  throwIfAny(status: IntakeStatus): void {
    if (this.total > 0) throw new IntakeError(status, this.items, this.total);
  }
}
