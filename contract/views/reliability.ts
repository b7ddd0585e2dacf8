/**
 * The API's views of a study's reliabilities, as the server sends them
 * (server/services/reliability.ts) and the web app reads them: the trait
 * reliabilities a study states (and the body that replaces them) and the
 * brain reliability per region from the brain table's sessions.
 */
import { z } from "zod";
import type { PersonRef } from "./datasets";

// ─── Trait reliabilities ───

export const traitReliabilityInput = z.strictObject({
  column: z.string().trim().min(1, { error: "must name a participant-sheet column" }).max(500),
  reliability: z
    .number({ error: "must be a number" })
    .gt(0, { error: "must be greater than 0" })
    .lte(1, { error: "must be at most 1" }),
  source: z
    .string({ error: "must say where the value comes from" })
    .trim()
    .min(1, {
      error:
        "must say where the value comes from (for example: test–retest r = .82, manual of the scale)",
    })
    .max(1000),
});

/** The PUT body: the study's whole list, each column at most once. */
export const traitReliabilityList = z
  .array(traitReliabilityInput)
  .max(1000)
  .superRefine((list, ctx) => {
    const seen = new Map<string, number>();
    list.forEach((entry, i) => {
      const first = seen.get(entry.column);
      if (first !== undefined) {
        ctx.addIssue({
          code: "custom",
          path: [i, "column"],
          message: `column "${entry.column}" is listed twice (first at ${first})`,
        });
      } else {
        seen.set(entry.column, i);
      }
    });
  });

export type TraitReliabilityInput = z.output<typeof traitReliabilityInput>;

export interface TraitReliabilityView {
  column: string;
  reliability: number;
  source: string;
  updatedBy: PersonRef;
  updatedAt: string;
}

// ─── Brain reliability ───

export interface IccInterval {
  value: number;
  /** null where the bound is unbounded (a k-session lower bound past the Spearman–Brown pole). */
  ciLow: number | null;
  ciHigh: number | null;
}

export interface RegionReliability {
  region: string;
  /** Participants with a value in every session. */
  n: number;
  sessions: number;
  icc11: IccInterval;
  icc21: IccInterval;
  icc31: IccInterval;
  icc1k: IccInterval;
  icc2k: IccInterval;
  icc3k: IccInterval;
  /** One-sided p of the F test that the two-way ICC is 0. */
  p: number;
}

export interface BrainReliabilityView {
  brainTable: { id: string; version: number; fileName: string };
  /** Session labels in natural order. */
  sessions: string[];
  /** Participants of the brain table with a value in at least two sessions (in any region). */
  participantsRetested: number;
  /** Per region: the six ICC forms, or the reason they could not be computed. */
  regions: (RegionReliability | { region: string; error: string })[];
  method: string;
  notes: string[];
}
