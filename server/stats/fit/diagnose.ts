/**
 * Stage 4 of a fit, diagnose (every kind but reliability): for each
 * participant of a region, the least-squares diagnostics of the region's
 * design (diagnostics.ts) with their flags; on the region's result the
 * variance inflation factors, the flags' cut-offs and counts, the
 * leave-one-out range of the estimate (least squares, exact deletion
 * formula) and a sensitivity refit without the participants flagged
 * `outlier` or `influence`. Hands the participants' rows to the result, and
 * the region's result, so completed, on to the infer stage.
 */
import type { Flag, RegionResult } from "../../../contract/spec";
import { leaveOneOutCorrelations } from "../compare-correlations";
import {
  type DiagnosticColumns,
  FLAG_BIT,
  FLAGS,
  regressionDiagnosticColumns,
} from "../diagnostics";
import { StatsError } from "../errors";
import { estimateRegion, olsFit } from "../fit-methods";
import { type LinearModelFit, type QrDecomposition, unscaledCovariance } from "../linear-model";
import type { RegionData } from "../region-data";
import { type RegionWork, designFor } from "./estimate";
import { valuesAt } from "./common";
import { type ParticipantRows, diagnosedRows } from "./participant-rows";
import type { Prepared } from "./prepare";

/**
 * The diagnostics of one region, from the least-squares fit of its design
 * whatever the estimator: a row per participant with its flags, and on the
 * region's result the variance inflation factors, the flags' cut-offs and
 * counts, then the leave-one-out range and the sensitivity refit (below).
 * Needs the region's decomposition (`work.qr`, present when n > p).
 */
export function diagnoseRegion(prep: Prepared, work: RegionWork): ParticipantRows {
  const { name: region, rows, data: d, result } = work;
  const qr = work.qr as QrDecomposition;
  // The estimate's own least-squares fit when it made one: the same numbers.
  const fit = work.leastSquares ?? olsFit(d, qr);
  const diag = regressionDiagnosticColumns(qr, fit, { interceptColumn: 0 });
  const ids = prep.data.participants;
  result.vif = diag.vif;
  // the flags' cut-offs, so the influence view draws the very values the flags used
  result.flagThresholds = diag.thresholds;
  const flagged: Record<Flag, number> = { outlier: 0, leverage: 0, influence: 0 };
  for (const flag of FLAGS)
    for (let k = 0; k < diag.n; k++) if (diag.flags[k] & FLAG_BIT[flag]) flagged[flag]++;
  result.flagged = flagged;
  if ((d.estimator === "ols" || d.estimator === "welch") && prep.spec.weights === "none")
    leaveOneOutRange(prep, rows, d, qr, fit, result);
  sensitivityRefit(prep, prep.data.values[work.r], rows, d, diag, result);
  return diagnosedRows({
    region,
    ids: idsOf(rows, ids),
    positions: rows,
    diagnostics: diag,
    coefficientNames: d.design.columnNames,
    value: d.y,
    fitted: fit.fitted,
    residual: fit.residuals,
  });
}

/**
 * The participants at `rows`, made once per rows array: regions whose rows
 * are the fit's shared eligible rows (every region without a missing value)
 * share one list, and so its stored text (participant-rows.ts).
 */
function idsOf(rows: readonly number[], participants: readonly string[]): readonly string[] {
  const kept = idsOfRows.get(rows);
  if (kept?.participants === participants) return kept.ids;
  const ids = rows.map((i) => participants[i]);
  idsOfRows.set(rows, { participants, ids });
  return ids;
}

const idsOfRows = new WeakMap<
  readonly number[],
  { participants: readonly string[]; ids: readonly string[] }
>();

/**
 * Leave-one-out range of the least-squares coefficient, exact: b − b(i) =
 * (XᵀX)⁻¹x_i e_i/(1 − h_i), participants at leverage 1 left out; for an
 * association without covariates also the range of the correlation. Sets
 * `result.leaveOneOut`. (Weighted fits: the exact deletion formula is that
 * of unweighted least squares, not of the weighted estimate, so no range is
 * given and this is not called.)
 */
function leaveOneOutRange(
  prep: Prepared,
  rows: readonly number[],
  d: RegionData,
  qr: QrDecomposition,
  fit: LinearModelFit,
  result: RegionResult,
): void {
  const ids = prep.data.participants;
  const cov = unscaledCovariance(qr);
  const p = qr.p;
  let lo = Infinity;
  let hi = -Infinity;
  let loK = -1;
  let hiK = -1;
  for (let k = 0; k < rows.length; k++) {
    const h = qr.hat[k];
    if (h > 1 - 1e-8) continue;
    let c = 0;
    for (let j = 0; j < p; j++) c += cov[d.tested * p + j] * d.design.x[k * p + j];
    const value = fit.coefficients[d.tested] - (c * fit.residuals[k]) / (1 - h);
    if (value < lo) {
      lo = value;
      loK = k;
    }
    if (value > hi) {
      hi = value;
      hiK = k;
    }
  }
  if (loK >= 0) {
    result.leaveOneOut = {
      estimateMin: lo,
      estimateMax: hi,
      minWithout: ids[rows[loK]],
      maxWithout: ids[rows[hiK]],
    };
  }
  if (d.kind === "association" && d.design.p === 2) {
    try {
      const loo = leaveOneOutCorrelations(d.x as Float64Array, d.y);
      result.leaveOneOut = {
        ...(result.leaveOneOut as Record<string, unknown> | undefined),
        rMin: loo.min,
        rMax: loo.max,
        rMinWithout: ids[rows[loo.minIndex]],
        rMaxWithout: ids[rows[loo.maxIndex]],
      };
    } catch (e) {
      if (!(e instanceof StatsError)) throw e;
    }
  }
}

/**
 * Sensitivity: the same estimator refitted without the participants flagged
 * `outlier` or `influence` (unweighted fits). Sets `result.sensitivity`, with
 * the refit's error message when the reduced region cannot be fitted.
 * `values` are the region's values of every participant of the data.
 */
function sensitivityRefit(
  prep: Prepared,
  values: ArrayLike<number>,
  rows: readonly number[],
  d: RegionData,
  diag: DiagnosticColumns,
  result: RegionResult,
): void {
  if (prep.spec.weights !== "none") return;
  const ids = prep.data.participants;
  const dropped = FLAG_BIT.outlier | FLAG_BIT.influence;
  // One pass over the flags, without a set: at 20,000 participants two filters looking rows up
  // in a set of the flagged were about a third of the refit's time.
  const keep: number[] = [];
  const excluded: string[] = [];
  for (let k = 0; k < rows.length; k++) {
    if (diag.flags[k] & dropped) excluded.push(ids[rows[k]]);
    else keep.push(rows[k]);
  }
  if (excluded.length > 0) {
    try {
      const { design, tested, covariateColumns, x, groupIndicator } = designFor(prep, keep);
      const reduced: RegionData = {
        ...d,
        y: valuesAt(values, keep),
        design,
        tested,
        covariateColumns,
        x,
        groupIndicator,
      };
      const est = estimateRegion(reduced);
      result.sensitivity = {
        excluded,
        n: keep.length,
        estimate: est.estimate,
        p: est.p,
        ciLow: est.ciLow,
        ciHigh: est.ciHigh,
        ...(est.r !== undefined ? { r: est.r } : {}),
      };
    } catch (e) {
      if (!(e instanceof StatsError)) throw e;
      result.sensitivity = { excluded, n: keep.length, error: e.message };
    }
  }
}
