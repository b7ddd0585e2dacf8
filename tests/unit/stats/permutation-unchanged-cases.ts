/**
 * Fits without empty cells whose permutation results were recorded from the
 * implementation before regions could differ in participants under max-T
 * (shared rearrangements): with every region on the same participants the
 * numbers must stay exactly what they were.
 */
import type { FitData, ModelSpecInput } from "../../../contract/spec";
import { permutationData } from "./permutation-data";

export interface UnchangedCase {
  name: string;
  spec: ModelSpecInput;
  data: () => FitData;
}

function withoutMotion(data: FitData, i: number): FitData {
  const motion = (data.numericColumns.motion as (number | null)[]).slice();
  motion[i] = null;
  return { ...data, numericColumns: { ...data.numericColumns, motion } };
}

export const unchangedCases: UnchangedCase[] = [
  {
    name: "one-sample, sign flips with a covariate, max-T",
    spec: {
      kind: "one-sample",
      covariates: ["motion"],
      inference: "permutation",
      resamples: 199,
      correction: "maxt",
      seed: 5,
    },
    data: () => permutationData(24, 3),
  },
  {
    name: "two groups, label permutation, max-T",
    spec: {
      kind: "two-group",
      group: "group",
      levels: ["patient", "control"],
      inference: "permutation",
      resamples: 199,
      correction: "maxt",
      seed: 6,
    },
    data: () => permutationData(24, 3),
  },
  {
    name: "association, Freedman–Lane with two covariates, max-T",
    spec: {
      kind: "association",
      predictor: "age",
      covariates: ["motion", "sex"],
      inference: "permutation",
      resamples: 199,
      correction: "maxt",
      seed: 7,
    },
    data: () => permutationData(24, 3),
  },
  {
    name: "association, Freedman–Lane, Holm, one participant set aside everywhere and one without motion",
    spec: {
      kind: "association",
      predictor: "age",
      covariates: ["motion"],
      inference: "permutation",
      resamples: 199,
      correction: "holm",
      seed: 8,
      setAside: [{ participant: "sub-02", reason: "decided before analysis" }],
    },
    data: () => withoutMotion(permutationData(24, 3), 4),
  },
  {
    name: "association, Spearman (generic rearrangements), max-T",
    spec: {
      kind: "association",
      predictor: "age",
      estimator: "rank",
      inference: "permutation",
      resamples: 199,
      correction: "maxt",
      seed: 9,
    },
    data: () => permutationData(24, 3),
  },
  {
    name: "two groups, Welch (generic label assignments), max-T",
    spec: {
      kind: "two-group",
      group: "group",
      estimator: "welch",
      inference: "permutation",
      resamples: 199,
      correction: "maxt",
      seed: 10,
    },
    data: () => permutationData(24, 3),
  },
  {
    name: "one-sample, Huber (generic sign flips), max-T",
    spec: {
      kind: "one-sample",
      estimator: "huber",
      inference: "permutation",
      resamples: 99,
      correction: "maxt",
      seed: 11,
    },
    data: () => permutationData(16, 3),
  },
  {
    name: "two groups of 3 and 6, every assignment, max-T",
    spec: {
      kind: "two-group",
      group: "group",
      inference: "permutation",
      resamples: 1000,
      correction: "maxt",
      seed: 12,
    },
    data: () => permutationData(9, 4),
  },
  {
    name: "one-sample of 8, every sign pattern, max-T",
    spec: {
      kind: "one-sample",
      inference: "permutation",
      resamples: 1000,
      correction: "maxt",
      seed: 13,
    },
    data: () => permutationData(8, 4),
  },
  {
    name: "association of 6 with a covariate, every order, max-T",
    spec: {
      kind: "association",
      predictor: "age",
      covariates: ["motion"],
      inference: "permutation",
      resamples: 1000,
      correction: "maxt",
      seed: 14,
    },
    data: () => permutationData(6, 4),
  },
];
