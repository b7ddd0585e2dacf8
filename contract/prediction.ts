/**
 * What a prediction fit (kind "prediction") reports, in one place for the
 * engine (server/stats/prediction/), the API (the `prediction` block of a
 * fit's result) and the fit screen. The scores are computed on held-out
 * participants only: r (Pearson correlation of observed and predicted
 * values), r2 = 1 − Σ(o − p)²/Σ(o − ō)² with ō the mean of the held-out
 * observed values (negative when the model predicts worse than that mean),
 * and the mean absolute error. Types only.
 */

export interface Scores {
  /** Pearson r; null when the observed or the predicted values are constant. */
  r: number | null;
  /** 1 − SSE/SST; null when the observed values are constant. */
  r2: number | null;
  mae: number;
}

export interface LearningCurvePoint {
  fraction: number;
  /** Smallest number of training rows over the folds at this fraction. */
  trainingRows: number;
  r: number | null;
  r2: number | null;
  rSpread: number | null;
  r2Spread: number | null;
}

export interface PredictionBlock {
  folds: number | "leave-one-out";
  repeats: number;
  seed: number;
  /** "fixed" with a given λ, "inner-cv" when chosen per fold. */
  lambdaChoice: "fixed" | "inner-cv";
  r: number | null;
  r2: number | null;
  mae: number;
  /** Standard deviation over repeats (null with one repeat). */
  spread: { r: number | null; r2: number | null; mae: number | null };
  perRepeat: ({ repeat: number } & Scores)[];
  participants: { participant: string; observed: number; predicted: number }[];
  regions: { region: string; weight: number; signConsistency: number }[];
  lambdas: { repeat: number; fold: number; lambda: number }[];
  permutation: { resamples: number; pR: number | null; pR2: number | null } | null;
  learningCurve: LearningCurvePoint[] | null;
}
