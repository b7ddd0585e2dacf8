/**
 * The statistic a generic permutation test (permutation.ts) rearranges in
 * one region, for the estimators without a linear kernel (rank, Welch,
 * robust, skipped and bend), with the rearrangement scheme it needs.
 * Least squares is permuted by the linear kernel instead.
 */
import { pearsonR } from "./correlation";
import { StatsError } from "./errors";
import { averageRanks } from "./ranks";
import type { RegionData } from "./region-data";
import { percentageBendCorrelation, skippedCorrelation } from "./robust-correlation";
import { type RobustPsi, robustLinearModel } from "./robust-regression";
import { welchTTest } from "./two-sample-t";

/**
 * The statistic a generic permutation test rearranges for estimators without
 * a linear kernel, with the scheme it needs. Each is centred at 0 under the
 * null hypothesis so the two-sided test compares |T*| with |T|. A
 * rearrangement on which the statistic does not exist (for example a robust
 * scale of 0) counts as at least as extreme as the observed one (+Infinity),
 * which can only make the p-value larger.
 */
export function permutationStatistic(d: RegionData): {
  scheme: "sign-flip" | "labels";
  groupSizes?: [number, number];
  /** "labels" with two groups: the participant (row of the region) each slot of `order` stands for */
  slots?: Int32Array;
  statistic: (order: Int32Array, signs: Float64Array) => number;
  name: string;
} {
  const { kind, estimator, y } = d;
  const n = y.length;
  if (kind === "one-sample") {
    if (estimator === "rank") {
      const nonZero: number[] = [];
      for (let i = 0; i < n; i++) if (y[i] !== 0) nonZero.push(i);
      const abs = Float64Array.from(nonZero, (i) => Math.abs(y[i]));
      const ranks = averageRanks(abs).ranks;
      const m = nonZero.length;
      return {
        scheme: "sign-flip",
        name: "signed-rank V − n(n+1)/4",
        statistic: (_order, signs) => {
          let v = 0;
          for (let k = 0; k < m; k++) if (y[nonZero[k]] * signs[nonZero[k]] > 0) v += ranks[k];
          return v - (m * (m + 1)) / 4;
        },
      };
    }
    const psi = estimator as RobustPsi;
    const ones = new Float64Array(n).fill(1);
    return {
      scheme: "sign-flip",
      name: "robust location t",
      statistic: (_order, signs) => {
        const z = new Float64Array(n);
        for (let i = 0; i < n; i++) z[i] = y[i] * signs[i];
        try {
          return robustLinearModel(ones, n, 1, z, { psi }).t[0];
        } catch (e) {
          if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
          throw e;
        }
      },
    };
  }
  if (kind === "two-group") {
    const ind = d.x as Float64Array;
    const first: number[] = [];
    const second: number[] = [];
    for (let i = 0; i < n; i++) (ind[i] === 1 ? first : second).push(i);
    const units = first.concat(second); // identity order: first group, then second
    const n1 = first.length;
    const values = Float64Array.from(units, (i) => y[i]);
    const pick = (order: Int32Array): [Float64Array, Float64Array] => {
      const a = new Float64Array(n1);
      const b = new Float64Array(n - n1);
      for (let k = 0; k < n; k++) {
        if (k < n1) a[k] = values[order[k]];
        else b[k - n1] = values[order[k]];
      }
      return [a, b];
    };
    if (estimator === "welch") {
      return {
        scheme: "labels",
        groupSizes: [n1, n - n1],
        slots: Int32Array.from(units),
        name: "Welch t",
        statistic: (order) => {
          const [a, b] = pick(order);
          try {
            return welchTTest(a, b).t;
          } catch (e) {
            if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
            throw e;
          }
        },
      };
    }
    if (estimator === "rank") {
      const ranks = averageRanks(values).ranks;
      return {
        scheme: "labels",
        groupSizes: [n1, n - n1],
        slots: Int32Array.from(units),
        name: "Mann–Whitney U − n1·n2/2",
        statistic: (order) => {
          let w = 0;
          for (let k = 0; k < n1; k++) w += ranks[order[k]];
          return w - (n1 * (n1 + 1)) / 2 - (n1 * (n - n1)) / 2;
        },
      };
    }
    const psi = estimator as RobustPsi;
    return {
      scheme: "labels",
      groupSizes: [n1, n - n1],
      slots: Int32Array.from(units),
      name: "robust t of the group difference",
      statistic: (order) => {
        const x = new Float64Array(n * 2);
        const z = new Float64Array(n);
        for (let k = 0; k < n; k++) {
          x[k * 2] = 1;
          x[k * 2 + 1] = k < n1 ? 1 : 0;
          z[k] = values[order[k]];
        }
        try {
          return robustLinearModel(x, n, 2, z, { psi }).t[1];
        } catch (e) {
          if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
          throw e;
        }
      },
    };
  }
  // association: rearrange the contrast values against the predictor
  const x = d.x as Float64Array;
  const permuted = (order: Int32Array): Float64Array => {
    const z = new Float64Array(n);
    for (let k = 0; k < n; k++) z[k] = y[order[k]];
    return z;
  };
  const guard = (f: () => number): number => {
    try {
      return f();
    } catch (e) {
      if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
      throw e;
    }
  };
  if (estimator === "rank") {
    const rx = averageRanks(x).ranks;
    const ry = averageRanks(y).ranks;
    return {
      scheme: "labels",
      name: "Spearman rho",
      statistic: (order) =>
        pearsonR(
          rx,
          Float64Array.from(order, (k) => ry[k]),
        ) ?? Number.POSITIVE_INFINITY,
    };
  }
  if (estimator === "skipped") {
    return {
      scheme: "labels",
      name: "skipped correlation r",
      statistic: (order) => guard(() => skippedCorrelation(x, permuted(order)).r),
    };
  }
  if (estimator === "bend") {
    return {
      scheme: "labels",
      name: "percentage-bend r",
      statistic: (order) => guard(() => percentageBendCorrelation(x, permuted(order)).r),
    };
  }
  const psi = estimator as RobustPsi;
  const design = d.design;
  return {
    scheme: "labels",
    name: "robust t of the slope",
    statistic: (order) =>
      guard(
        () => robustLinearModel(design.x, design.n, design.p, permuted(order), { psi }).t[d.tested],
      ),
  };
}
