/**
 * Confidence interval of the mean response of a least-squares fit at new
 * design rows (pointwise; evaluated on a grid it is the confidence band
 * drawn around a fitted line).
 *
 * For a row x₀ of the design: ŷ₀ = x₀ᵀb, se(ŷ₀) = s·√(x₀ᵀ(XᵀX)⁻¹x₀), and
 * the interval is ŷ₀ ± t(1 − α/2, n − p)·se(ŷ₀) (Weisberg 2005, "Applied
 * Linear Regression", 3rd ed., §3.6; Draper & Smith 1998, §2.4) — what a
 * general-purpose statistics environment prints for
 * `predict(fit, newdata, interval = "confidence")`. (XᵀX)⁻¹ = R⁻¹R⁻ᵀ from
 * the fit's QR decomposition, so x₀ᵀ(XᵀX)⁻¹x₀ = ‖R⁻ᵀx₀‖².
 *
 * Cost O(p²) per row. Preconditions: a fit with residual degrees of freedom
 * (n > p), rows of p finite numbers, 0 < level < 1. Throws StatsError
 * otherwise.
 */
import type { MeanResponse } from "../../contract/views/fits";
import { studentTQuantile } from "./distributions";
import { StatsError, require } from "./errors";
import type { LinearModelFit, QrDecomposition } from "./linear-model";

export function meanResponseBand(
  model: Pick<LinearModelFit, "coefficients" | "sigma" | "df"> & {
    qr: Pick<QrDecomposition, "p" | "rInverse">;
  },
  rows: readonly (readonly number[] | Float64Array)[],
  options: { level?: number } = {},
): MeanResponse[] {
  const level = options.level ?? 0.95;
  require(level > 0 && level < 1, "meanResponseBand requires a level between 0 and 1");
  const { p, rInverse } = model.qr;
  const { coefficients, sigma, df } = model;
  if (sigma === null || !(df > 0))
    throw new StatsError(
      "meanResponseBand requires a fit with residual degrees of freedom (n > p)",
    );
  const q = studentTQuantile(0.5 + level / 2, df);
  const work = new Float64Array(p);
  return rows.map((row, k) => {
    require(row.length ===
      p, `meanResponseBand requires rows of ${p} values (row ${k + 1} has ${row.length})`);
    let fit = 0;
    for (let j = 0; j < p; j++) {
      const v = row[j];
      if (!Number.isFinite(v))
        throw new StatsError(
          `meanResponseBand requires finite values (row ${k + 1}, column ${j + 1})`,
        );
      fit += v * coefficients[j];
    }
    // work = R⁻ᵀx₀: work_j = Σ_{i ≤ j} R⁻¹[i, j]·x₀[i] (R⁻¹ is upper triangular).
    let quad = 0;
    for (let j = 0; j < p; j++) {
      let s = 0;
      for (let i = 0; i <= j; i++) s += rInverse[i * p + j] * row[i];
      work[j] = s;
      quad += s * s;
    }
    const se = sigma * Math.sqrt(quad);
    return { fit, se, low: fit - q * se, high: fit + q * se };
  });
}
