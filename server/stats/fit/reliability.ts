/**
 * A reliability fit, all stages in one: after the prepare stage, per region
 * the participants' values in every session (prepare.ts), the intraclass
 * correlations (icc.ts; the estimate is ICC(2,1), all six forms reported),
 * the correction over regions and the notes. Returns the finished FitResult
 * (no participant diagnostics, no resampling).
 */
import type { FitData, FitResult, RegionResult } from "../../../contract/spec";
import { type IntraclassCorrelation, intraclassCorrelations } from "../icc";
import { FIT_LEVEL, type RunFitOptions, assertFinite, cancelled, inRegion } from "./common";
import { correctOverRegions } from "./infer";
import { reliabilityNotes } from "./notes";
import { type Prepared, sessionMatrix } from "./prepare";

/**
 * One ICC form as a fit reports it: { value, ciLow, ciHigh, f, df1, df2, p }.
 * A k-session lower bound past the Spearman–Brown pole is unbounded below
 * (−Infinity in icc.ts) and is reported as null.
 */
function iccForm(x: IntraclassCorrelation) {
  return {
    value: x.value,
    ciLow: Number.isFinite(x.ciLow) ? x.ciLow : null,
    ciHigh: Number.isFinite(x.ciHigh) ? x.ciHigh : null,
    f: x.f,
    df1: x.df1,
    df2: x.df2,
    p: x.p,
  };
}

/** Runs a reliability fit on a prepared model (kind "reliability"); throws StatsError for max-T. */
export function runReliability(prep: Prepared, options: RunFitOptions): FitResult {
  const { data, spec } = prep;
  const sessions = data.sessions as NonNullable<FitData["sessions"]>;
  const k = sessions.labels.length;
  const regions: RegionResult[] = [];
  prep.regionIndex.forEach((r, idx) => {
    if (options.shouldCancel?.()) cancelled();
    const name = data.regions[r];
    inRegion(name, () => {
      const matrix = sessionMatrix(prep, r);
      const icc = intraclassCorrelations(matrix, { level: FIT_LEVEL });
      const main = icc.icc21;
      regions.push({
        region: name,
        n: matrix.length,
        estimate: main.value,
        se: null,
        statistic: main.f,
        df: null,
        p: main.p,
        pAdjusted: main.p,
        ciLow: main.ciLow,
        ciHigh: main.ciHigh,
        method:
          "intraclass correlation ICC(2,1), two-way random effects, absolute agreement (Shrout & Fleiss 1979)",
        sessions: k,
        df1: main.df1,
        df2: main.df2,
        icc11: iccForm(icc.icc11),
        icc21: iccForm(icc.icc21),
        icc31: iccForm(icc.icc31),
        icc1k: iccForm(icc.icc1k),
        icc2k: iccForm(icc.icc2k),
        icc3k: iccForm(icc.icc3k),
      });
    });
    options.onProgress?.((idx + 1) / prep.regionIndex.length);
  });
  const notes: string[] = [];
  // max-T needs permutation inference, which reliability does not take: the fit rules refuse it (prepare.ts).
  correctOverRegions(regions, spec.correction, notes);
  notes.push(...reliabilityNotes());
  const result: FitResult = {
    regions,
    participants: [],
    notes,
    kind: "reliability",
    estimator: spec.estimator,
    inference: spec.inference,
    correction: spec.correction,
    seed: spec.seed,
    level: FIT_LEVEL,
  };
  assertFinite(result, "result");
  return result;
}
