/**
 * The planner's question, shared by the Planner screen and `POST /api/planner`
 * (zod only, so the web app can import it).
 */
import { z } from "zod";

const unitInterval = (what: string) =>
  z
    .number({ error: `${what} must be a number` })
    .gt(0, { error: `${what} must be above 0` })
    .lt(1, { error: `${what} must be below 1` });
const reliability = (what: string) =>
  z
    .number({ error: `${what} must be a number` })
    .gt(0, { error: `${what} must be above 0` })
    .max(1, { error: `${what} must be at most 1` });

export const varianceComponentsSchema = z.strictObject({
  measurementNoise: z.number().min(0, { error: "measurementNoise must be at least 0" }),
  taskDesign: z.number().min(0, { error: "taskDesign must be at least 0" }),
  trueDifferences: z.number().gt(0, { error: "trueDifferences must be above 0" }),
});

/**
 * The planner's cost cap: the most random draws one simulation may take.
 * Every simulated study draws, for each participant, a true value, a trait
 * (correlation) and one value per session, so a simulation takes at most
 * simulated studies × participants over the study sizes tried × (sessions + 2)
 * draws. The simulation makes 10–12 million draws per second of one core on
 * the 2-core reference machine, so at the cap it keeps the planner's worker
 * thread busy for about 18 s (`npm run bench -- planner-load` prints the
 * figures).
 */
export const PLANNER_MAX_DRAWS = 200_000_000;

/** Random draws of a simulation of `simulations` studies at each of `sizes` (total participants), `sessions` per participant. */
export function simulationDraws(
  simulations: number,
  sizes: readonly number[],
  sessions = 1,
): number {
  const participants = sizes.reduce((sum, n) => sum + n, 0);
  return simulations * participants * (sessions + 2);
}

/** The cap in words, for the Planner form and the refusal. */
export const simulationLimitText = `A simulation may take at most ${PLANNER_MAX_DRAWS / 1e6} million random draws (simulated studies × participants over the study sizes tried × (sessions + 2)).`;

export const plannerQuestionSchema = z
  .strictObject({
    design: z.enum(["correlation", "two-group", "one-sample"]),
    /** r for "correlation", Cohen's d otherwise. */
    effect: z.number({ error: "effect must be a number" }),
    alpha: unitInterval("alpha").default(0.05),
    power: unitInterval("power").default(0.8),
    reliabilityBrain: reliability("reliabilityBrain").optional(),
    reliabilityTrait: reliability("reliabilityTrait").optional(),
    groupRatio: z
      .number()
      .gt(0, { error: "groupRatio must be above 0" })
      .max(100, { error: "groupRatio must be at most 100" })
      .optional(),
    /** "formula" (default) or "simulation" from three variance components. */
    mode: z.enum(["formula", "simulation"]).default("formula"),
    components: varianceComponentsSchema.optional(),
    sessions: z.number().int().min(1).max(20).optional(),
    trials: z.number().int().min(1).max(10_000).optional(),
    simulations: z.number().int().min(100).max(20_000).default(2000),
    seed: z
      .number()
      .int()
      .min(0)
      .max(2 ** 31 - 1)
      .default(1),
  })
  .superRefine((q, ctx) => {
    if (q.design === "correlation" && !(q.effect > -1 && q.effect < 1 && q.effect !== 0)) {
      ctx.addIssue({
        code: "custom",
        path: ["effect"],
        message: "a correlation effect must be between -1 and 1 and not 0",
      });
    }
    if (q.design !== "correlation" && (q.effect === 0 || Math.abs(q.effect) > 10)) {
      ctx.addIssue({
        code: "custom",
        path: ["effect"],
        message: "a standardised difference d must be non-zero and at most 10 in size",
      });
    }
    if (q.mode === "simulation" && !q.components) {
      ctx.addIssue({
        code: "custom",
        path: ["components"],
        message: "simulation needs the three variance components",
      });
    }
    if (q.groupRatio !== undefined && q.design !== "two-group") {
      ctx.addIssue({
        code: "custom",
        path: ["groupRatio"],
        message: "groupRatio applies to the two-group design only",
      });
    }
  });

export type PlannerQuestionInput = z.input<typeof plannerQuestionSchema>;
export type PlannerQuestion = z.output<typeof plannerQuestionSchema>;

export interface PlannerAnswer {
  n: number;
  nPerGroup?: [number, number];
  observableEffect: number;
  curve: { n: number; power: number }[];
  /** Plain-words statement of the method behind the numbers. */
  method: string;
  simulation?: {
    reliability: number;
    observableEffect: number;
    simulations: number;
    seed: number;
    /** Smallest simulated study size whose power reached the target, or null. */
    n: number | null;
    points: { n: number; power: number; se: number; formulaPower: number }[];
  };
}
