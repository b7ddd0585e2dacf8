/**
 * What `GET /api/fits/:fitId/sentences` answers: one results sentence per
 * region, in fit order, as plain text (for the clipboard) and as runs with
 * italics (for the screen). The rules are in contract/results-sentences.ts.
 */
import type { TextRun } from "../results-sentences";

export type { TextRun };

export interface ResultsSentenceView {
  region: string;
  /** The sentence without marks: "r(58) = .31, 95% CI [.06, .52], p = .016". */
  text: string;
  /** The same sentence with its italics, sub- and superscripts. */
  runs: TextRun[];
}
