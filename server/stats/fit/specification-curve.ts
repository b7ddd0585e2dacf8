/**
 * A fit of kind "specification-curve": one question (an association with
 * `predictor`, or two groups with `group` and `levels`) in one region,
 * fitted under every combination of the reasonable alternatives the analyst
 * lists — estimator × covariate set × on/off of each exclusion rule (2^k
 * subsets) — after Simonsohn, Simmons & Nelson 2020 (Nature Human Behaviour
 * 4:1208–1214) and Steegen et al. 2016 (multiverse analysis).
 *
 * Every specification is the ordinary single-region fit: an association or
 * two-group ModelSpec with that estimator and covariates, the model's own
 * set-asides plus the participants the switched-on rules exclude, checked
 * by prepare.ts and estimated by estimateRegionWork (estimate.ts) — the same
 * code as an ordinary fit, so each specification equals it exactly.
 *
 * Exclusion rules (contract/exclusion-rules.ts) are judged on the
 * participant sheet: numeric comparisons, == and != also on categories; a
 * participant with a missing value in a rule's column is not excluded by
 * that rule.
 *
 * Joint test (inference "permutation", `resamples` null draws): the null
 * data are made by permuting the trait — the predictor of an association,
 * the group label of two groups — across all participants of the sheet with
 * one random permutation per draw (seeded by `seed`), while each
 * participant keeps their brain value, covariates and exclusion-column
 * values together. Every specification is re-run on each null draw and the
 * curve scored as in specification-curve/joint.ts; with every trait value
 * present an association's specification keeps its design and only the
 * tested column changes (fastNull, swappedNull: the ordinary fit's numbers,
 * robust ones to rounding). The permutation makes
 * the trait unrelated to the brain value in every specification at once
 * (and, unlike removing the estimated effect, needs no model to be right).
 */
import { curveKind } from "../../../contract/fit-rules";
import {
  type FitData,
  type FitResult,
  type ModelSpec,
  modelSpecSchema,
} from "../../../contract/spec";
import {
  type CurveSpecification,
  curveChoices,
  specificationModel,
} from "../../../contract/specification-curve";
import { createBlockRng, createRng, type Rng } from "../rng";
import {
  type CurveStatistics,
  curveStatistics,
  curveSummary,
  jointPValues,
} from "../specification-curve/joint";
import { FIT_LEVEL, type RunFitOptions, assertFinite, cancelled, fail, inRegion } from "./common";
import { studentTTwoSidedP } from "../distributions";
import { estimateRegion, rankedDesign } from "../fit-methods";
import type { Estimator as RegionEstimator } from "../region-data";
import { type RankResult, averageRanks } from "../ranks";
import { spearmanFromRanks } from "../spearman";
import { robustCoefficientByNormalEquations, robustWorkspace } from "../robust-regression";
import { designFor, estimateRegionWork } from "./estimate";
import { type Prepared, prepare, regionRows } from "./prepare";

type Estimator = ModelSpec["estimator"];

interface Choice {
  estimator: Estimator;
  covariates: string[];
  exclusions: number[];
  prep: Prepared;
}

/** Every specification of the curve, in a fixed order (estimator, covariate set, rule subset), each prepared as an ordinary fit. */
function choicesOf(prep: Prepared): Choice[] {
  const s = prep.spec;
  const { estimators: estimatorList, covariateSets: sets, exclusionRules: rules } = curveChoices(s);
  const out: Choice[] = [];
  for (const estimator of estimatorList)
    for (const covariates of sets)
      for (let mask = 0; mask < 1 << rules.length; mask++) {
        const exclusions = rules.map((_, k) => k).filter((k) => mask & (1 << k));
        const sub = ordinarySpec(s, { estimator, covariates, exclusions });
        const label = `specification (${estimator}; covariates: ${covariates.join(", ") || "none"}; rules on: ${exclusions.map((k) => k + 1).join(", ") || "none"})`;
        let p: Prepared;
        try {
          p = prepare(sub, prep.data);
        } catch (e) {
          if (e instanceof Error) fail(`${label}: ${e.message}`);
          throw e;
        }
        out.push({ estimator, covariates, exclusions, prep: p });
      }
  return out;
}

/**
 * The ordinary association or two-group model of one specification
 * (contract/specification-curve.ts `specificationModel`: the switched-on
 * rules as its `exclusionRules`), with the curve's own set-asides.
 */
export function ordinarySpec(
  s: ModelSpec,
  choice: { estimator: Estimator; covariates: string[]; exclusions: number[] },
): ModelSpec {
  return modelSpecSchema.parse({ ...specificationModel(s, choice), setAside: s.setAside });
}

/**
 * The null draws of a least-squares or partial-Spearman specification of an
 * association, without refitting the whole model: when every participant
 * has a trait value, permuting the trait leaves the specification's
 * participants unchanged, so the covariate part of the design (Z: the
 * intercept and covariates, ranked for partial Spearman as rankedDesign
 * does) is fixed. By the Frisch–Waugh–Lovell theorem the tested slope is
 * b = (r_x·r_y)/(r_x·r_x) with r_x, r_y the residuals of the permuted trait
 * (its ranks) and of the brain value (its ranks) on Z, and its t = b/se with
 * se² = (r_y·r_y − b·r_x·r_y)/(df·r_x·r_x), df = n − columns — the same
 * estimate, t and p as the full fit (tested against it). Returns null
 * where this does not apply (the ordinary fit is then re-run).
 */
export function fastNull(
  prep: Prepared,
  r: number,
  trait: readonly (number | null)[],
  ranker?: TraitRanker,
): ((perm: Int32Array) => { estimate: number; p: number }) | null {
  const estimator = prep.spec.estimator;
  if (prep.spec.kind !== "association" || prep.group) return null;
  if (!(estimator === "ols" || estimator === "rank")) return null;
  if (!trait.every((v) => v !== null && Number.isFinite(v))) return null;
  const rows = regionRows(prep, r);
  const { design, tested } = designFor(prep, rows);
  const rank = estimator === "rank";
  if (!(estimator === "ols" || (rank && design.p > 2))) return null;
  const n = design.n;
  const p = design.p;
  const df = n - p;
  if (df < 1) return null;
  const x = rank ? rankedDesign(design) : design.x;
  const yRaw = Float64Array.from(rows, (i) => prep.data.values[r][i]);
  const y = rank ? averageRanks(yRaw).ranks : yRaw;
  // Orthonormal basis of Z by modified Gram–Schmidt.
  const basis: Float64Array[] = [];
  for (let c = 0; c < p; c++) {
    if (c === tested) continue;
    const v = new Float64Array(n);
    for (let i = 0; i < n; i++) v[i] = x[i * p + c];
    for (const q of basis) {
      let dot = 0;
      for (let i = 0; i < n; i++) dot += q[i] * v[i];
      for (let i = 0; i < n; i++) v[i] -= dot * q[i];
    }
    let norm = 0;
    for (let i = 0; i < n; i++) norm += v[i] * v[i];
    norm = Math.sqrt(norm);
    if (!(norm > 1e-10)) return null;
    for (let i = 0; i < n; i++) v[i] /= norm;
    basis.push(v);
  }
  // The basis one after another in one array; the same Gram–Schmidt sweeps, in the same order.
  const nb = basis.length;
  const q = new Float64Array(nb * n);
  for (let c = 0; c < nb; c++) q.set(basis[c], c * n);
  const residual = (v: Float64Array) => {
    for (let c = 0; c < nb; c++) {
      const off = c * n;
      let dot = 0;
      for (let i = 0; i < n; i++) dot += q[off + i] * v[i];
      for (let i = 0; i < n; i++) v[i] -= dot * q[off + i];
    }
    return v;
  };
  const ry = residual(Float64Array.from(y));
  let ryy = 0;
  for (let i = 0; i < n; i++) ryy += ry[i] * ry[i];
  const rx = new Float64Array(n);
  const ranksOf = rank ? (ranker ?? drawRanks(trait as readonly number[])) : null;
  return (perm) => {
    if (ranksOf) ranksOf(perm, rows, rx);
    else for (let k = 0; k < n; k++) rx[k] = trait[perm[rows[k]]] as number;
    residual(rx);
    let sxx = 0;
    let sxy = 0;
    for (let i = 0; i < n; i++) {
      sxx += rx[i] * rx[i];
      sxy += rx[i] * ry[i];
    }
    const b = sxy / sxx;
    const rss = Math.max(0, ryy - b * sxy);
    const t = b / Math.sqrt(rss / df / sxx);
    return { estimate: rank ? t / Math.sqrt(t * t + df) : b, p: studentTTwoSidedP(t, df) };
  };
}

/**
 * Average ranks (ties share the mean of their ranks, as averageRanks) of
 * the trait values a draw puts on a specification's rows — row k gets
 * trait[perm[rows[k]]] — and the sizes of their tie groups, without sorting
 * per draw: the trait is sorted once into runs of equal values, and each
 * draw walks the runs keeping the values it uses. Same ranks and tie groups
 * as averageRanks on those values (tested against it); written to `out`
 * when given. Cost O(N) per draw, N = participants, after O(N log N) once
 * (one ranker serves every specification of a curve).
 */
export type TraitRanker = (
  perm: Int32Array,
  rows: ArrayLike<number>,
  out?: Float64Array,
) => RankResult;

export function drawRanks(trait: readonly number[]): TraitRanker {
  const total = trait.length;
  const order = Int32Array.from({ length: total }, (_, i) => i);
  order.sort((a, b) => trait[a] - trait[b] || a - b);
  // Runs of equal values in ascending order: run s holds order[runStart[s]] … order[runStart[s + 1] − 1].
  const starts: number[] = [];
  for (let i = 0; i < total; i++)
    if (i === 0 || trait[order[i]] !== trait[order[i - 1]]) starts.push(i);
  starts.push(total);
  const runStart = Int32Array.from(starts);
  const runs = runStart.length - 1;
  const slot = new Int32Array(total);
  return (perm, rows, out) => {
    const n = rows.length;
    slot.fill(-1);
    for (let k = 0; k < n; k++) slot[perm[rows[k]]] = k;
    const ranks = out ?? new Float64Array(n);
    const ties: number[] = [];
    let seen = 0;
    for (let s = 0; s < runs; s++) {
      const start = runStart[s];
      const end = runStart[s + 1];
      if (end - start === 1) {
        const k = slot[order[start]];
        if (k >= 0) {
          seen++;
          ranks[k] = seen; // (seen + 1 + seen + 1)/2 of a group of one
        }
        continue;
      }
      let count = 0;
      for (let q = start; q < end; q++) if (slot[order[q]] >= 0) count++;
      if (count === 0) continue;
      const r = (seen + 1 + seen + count) / 2;
      for (let q = start; q < end; q++) {
        const k = slot[order[q]];
        if (k >= 0) ranks[k] = r;
      }
      if (count > 1) ties.push(count);
      seen += count;
    }
    return { ranks, ties };
  };
}

/**
 * The null draws of any other association specification when every
 * participant has a trait value: the specification's participants, design
 * and brain values are fixed, so each draw only puts the permuted trait into
 * the tested column of one kept copy of the design and runs the estimator on
 * it — estimateRegion, the call the ordinary fit makes, without rebuilding
 * the design and its unused decomposition (the same numbers; tested against
 * the ordinary fit). Spearman's correlation (rank without covariates) takes
 * the brain value's ranks once and the trait's from drawRanks, the same
 * ranks without a sort per draw (spearmanFromRanks; same numbers). Huber and bisquare draws run the same IRLS in one
 * workspace kept for the specification with each step solved by the normal
 * equations (robustCoefficientByNormalEquations): about 1e-12 relative from
 * the ordinary fit's QR steps, or the stopping tolerance where a step's
 * change lands on it (tested against the ordinary fit). Returns null where
 * this does not apply.
 */
export function swappedNull(
  prep: Prepared,
  r: number,
  trait: readonly (number | null)[],
  ranker?: TraitRanker,
): ((perm: Int32Array) => { estimate: number; p: number }) | null {
  if (prep.spec.kind !== "association" || prep.group) return null;
  if (!trait.every((v) => v !== null && Number.isFinite(v))) return null;
  const rows = regionRows(prep, r);
  const { design, tested, covariateColumns } = designFor(prep, rows);
  const y = Float64Array.from(rows, (i) => prep.data.values[r][i]);
  const n = design.n;
  const p = design.p;
  const estimator = prep.spec.estimator as RegionEstimator;
  const x = Float64Array.from(design.x);
  const xs = new Float64Array(n);
  const put = (perm: Int32Array) => {
    for (let k = 0; k < n; k++) {
      const v = trait[perm[rows[k]]] as number;
      xs[k] = v;
      x[k * p + tested] = v;
    }
  };
  if ((estimator === "huber" || estimator === "bisquare") && n > p) {
    const workspace = robustWorkspace(n, p);
    const options = { psi: estimator, columnNames: design.columnNames } as const;
    return (perm) => {
      put(perm);
      const fit = robustCoefficientByNormalEquations(x, y, tested, workspace, options);
      return { estimate: fit.estimate, p: fit.p };
    };
  }
  if (estimator === "rank" && covariateColumns === 0) {
    // Spearman's correlation (estimateRegion's choice without covariates) from ranks: y's once, the trait's per draw without a sort.
    const ry = averageRanks(y);
    const ranksOf = ranker ?? drawRanks(trait as readonly number[]);
    const rx = new Float64Array(n);
    return (perm) => {
      const s = spearmanFromRanks(ranksOf(perm, rows, rx), ry, { level: FIT_LEVEL });
      return { estimate: s.r, p: s.p };
    };
  }
  return (perm) => {
    put(perm);
    const est = estimateRegion({
      kind: "association",
      estimator,
      y,
      design: { ...design, x: Float64Array.from(x) },
      tested,
      covariateColumns,
      x: Float64Array.from(xs),
      groupIndicator: null,
      level: FIT_LEVEL,
    });
    return { estimate: est.estimate, p: est.p };
  };
}

/** One specification's estimate on its prepared data (a fresh decomposition: designs differ between specifications). */
function fitOne(prep: Prepared, r: number) {
  return estimateRegionWork(prep, r, new Map()).result;
}

/** Null draws per block when a fit records rearrangementStreams "blocks-v1". */
export const CURVE_BLOCK_DRAWS = 25;

/**
 * The null draws of the joint test: `draw(rng, count, out, onDraw)` makes
 * `count` null data sets, each from one random permutation of the trait
 * (or group labels) taken from `rng` (its `shuffle` of 0…N−1), re-runs
 * every specification on it and appends the curve's statistics to `out`.
 * With one stream (recipes without rearrangementStreams) all draws come
 * from createRng(seed); with "blocks-v1" draw d belongs to block
 * ⌊d / CURVE_BLOCK_DRAWS⌋, whose permutations come from
 * createBlockRng(seed, block) — so blocks can be made apart (threads,
 * worker processes) and give the same numbers.
 */
function nullDrawer(
  prep: Prepared,
  choices: readonly Choice[],
): (rng: Rng, count: number, out: CurveStatistics[], onDraw?: () => void) => void {
  const s = prep.spec;
  const r = prep.regionIndex[0];
  const region = prep.data.regions[r];
  const question = curveKind(s);
  const K = choices.length;
  const n = prep.data.participants.length;
  const perm = new Int32Array(n);
  const estimates = new Float64Array(K);
  const ps = new Float64Array(K);
  const trait =
    question === "association"
      ? (prep.data.numericColumns[s.predictor as string] as readonly (number | null)[])
      : null;
  const groupColumn = choices[0]?.prep.group ?? null;
  // One ranker of the trait for every rank specification (it sorts the trait once).
  const ranker =
    trait?.every((v) => v !== null && Number.isFinite(v)) &&
    choices.some((c) => c.estimator === "rank")
      ? drawRanks(trait as readonly number[])
      : undefined;
  const fast = trait
    ? choices.map((c) =>
        inRegion(
          region,
          () => fastNull(c.prep, r, trait, ranker) ?? swappedNull(c.prep, r, trait, ranker),
        ),
      )
    : [];
  return (rng, count, out, onDraw) => {
    for (let d = 0; d < count; d++) {
      for (let i = 0; i < n; i++) perm[i] = i;
      rng.shuffle(perm);
      const permuted =
        question === "association"
          ? { predictor: Array.from(perm, (j) => (trait as readonly (number | null)[])[j]) }
          : { group: Array.from(perm, (j) => (groupColumn as readonly (string | null)[])[j]) };
      inRegion(region, () => {
        for (let k = 0; k < K; k++) {
          const quick = fast[k];
          if (quick) {
            const res = quick(perm);
            estimates[k] = res.estimate;
            ps[k] = res.p;
            continue;
          }
          const res = fitOne({ ...choices[k].prep, ...permuted }, r);
          estimates[k] = res.estimate;
          ps[k] = res.p;
        }
      });
      out.push(curveStatistics(estimates, ps));
      onDraw?.();
    }
  };
}

/** Equal content: the same keys and values, numbers compared by Object.is, arrays and typed arrays element by element. */
function sameContent(a: unknown, b: unknown): boolean {
  if (Object.is(a, b)) return true;
  if (typeof a !== "object" || typeof b !== "object" || a === null || b === null) return false;
  if (Object.getPrototypeOf(a) !== Object.getPrototypeOf(b)) return false;
  if (Array.isArray(a) || ArrayBuffer.isView(a)) {
    const x = a as ArrayLike<unknown>;
    const y = b as ArrayLike<unknown>;
    if (x.length !== y.length) return false;
    for (let i = 0; i < x.length; i++) if (!sameContent(x[i], y[i])) return false;
    return true;
  }
  const keys = Object.keys(a);
  if (keys.length !== Object.keys(b).length) return false;
  for (const k of keys)
    if (
      !Object.hasOwn(b, k) ||
      !sameContent((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k])
    )
      return false;
  return true;
}

/**
 * The specifications and null-draw setup of the last curve whose blocks
 * this thread drew, kept for its next block: preparing every specification
 * and its kept design costs about as much as a block's draws, and a thread
 * usually gets several blocks of one fit. Reused only for a spec and data
 * of equal content (sameContent), so a block's numbers never depend on
 * what the thread drew before (tested).
 */
let lastCurve: {
  spec: ModelSpec;
  data: FitData;
  seed: number;
  resamples: number;
  draw: ReturnType<typeof nullDrawer>;
} | null = null;

/**
 * The null statistics of block `block` of a curve fit recording
 * rearrangementStreams "blocks-v1" (draws block·CURVE_BLOCK_DRAWS onwards,
 * at most CURVE_BLOCK_DRAWS of them), for a caller that makes blocks apart
 * and merges them: the joint test's p-values count null draws, so they do
 * not depend on the order blocks are merged in. Cost: one block's share of
 * the joint test, plus preparing the specifications when the thread's last
 * block was of another curve (see lastCurve).
 */
export function curveNullBlock(spec: ModelSpec, data: FitData, block: number): CurveStatistics[] {
  const cached =
    lastCurve && sameContent(lastCurve.spec, spec) && sameContent(lastCurve.data, data)
      ? lastCurve
      : null;
  let setup = cached;
  if (!setup) {
    lastCurve = null;
    const prep = prepare(spec, data);
    const s = prep.spec;
    if (s.kind !== "specification-curve" || s.inference !== "permutation")
      fail("null blocks belong to a specification curve with the joint test");
    if (s.rearrangementStreams !== "blocks-v1")
      fail('null blocks need a fit that records rearrangementStreams "blocks-v1"');
    const region = prep.data.regions[prep.regionIndex[0]];
    const choices = inRegion(region, () => choicesOf(prep));
    // Copies: a caller may change its spec or data in place before the next block.
    setup = {
      spec: structuredClone(spec),
      data: structuredClone(data),
      seed: s.seed,
      resamples: s.resamples,
      draw: nullDrawer(prep, choices),
    };
  }
  const first = block * CURVE_BLOCK_DRAWS;
  if (!Number.isInteger(block) || block < 0 || first >= setup.resamples)
    fail(`block ${block} is outside the fit's ${setup.resamples} null draws`);
  const out: CurveStatistics[] = [];
  setup.draw(
    createBlockRng(setup.seed, block),
    Math.min(CURVE_BLOCK_DRAWS, setup.resamples - first),
    out,
  );
  lastCurve = setup;
  return out;
}

/**
 * Runs the curve. Cost: K = estimators × covariate sets × 2^rules ordinary
 * single-region fits, times (resamples + 1) with the joint test.
 */
export function runSpecificationCurve(prep: Prepared, options: RunFitOptions): FitResult {
  const { onProgress, shouldCancel } = options;
  const s = prep.spec;
  const r = prep.regionIndex[0];
  const region = prep.data.regions[r];
  const question = curveKind(s);
  const choices = inRegion(region, () => choicesOf(prep));
  const K = choices.length;
  const observed = inRegion(region, () =>
    choices.map((c) => {
      const res = fitOne(c.prep, r);
      return { c, res };
    }),
  );
  const specifications: CurveSpecification[] = observed.map(({ c, res }) => ({
    estimator: c.estimator,
    covariates: [...c.covariates],
    exclusions: c.exclusions,
    n: res.n,
    estimate: res.estimate,
    ciLow: res.ciLow,
    ciHigh: res.ciHigh,
    p: res.p,
  }));
  const summary = curveSummary(specifications);
  const notes = [
    `${K} specification${K === 1 ? "" : "s"}: every combination of estimator, covariate set and exclusion rules switched on or off; each is the ordinary ${question === "association" ? "association" : "two-group"} fit of region '${region}'.`,
    "Significant: p < .05, two-sided. Exclusion rules are judged on the participant sheet; a participant with a missing value in a rule's column is not excluded by that rule.",
  ];
  let jointTest: FitResult["jointTest"];
  if (s.inference === "permutation") {
    const m = s.resamples;
    const draw = nullDrawer(prep, choices);
    const nulls: CurveStatistics[] = [];
    const onDraw = () => {
      if (shouldCancel?.()) cancelled();
      onProgress?.(Math.min(1, nulls.length / m));
    };
    if (s.rearrangementStreams === "blocks-v1" && options.curveNulls) {
      nulls.push(...options.curveNulls());
      if (nulls.length !== m) fail(`internal: ${nulls.length} null draws merged of ${m}`);
    } else if (s.rearrangementStreams === "blocks-v1")
      for (let b = 0; b * CURVE_BLOCK_DRAWS < m; b++)
        draw(
          createBlockRng(s.seed, b),
          Math.min(CURVE_BLOCK_DRAWS, m - b * CURVE_BLOCK_DRAWS),
          nulls,
          onDraw,
        );
    else draw(createRng(s.seed), m, nulls, onDraw);
    const obs = curveStatistics(
      specifications.map((x) => x.estimate),
      specifications.map((x) => x.p),
    );
    jointTest = {
      resamples: m,
      dominantDirection: obs.direction > 0 ? "positive" : "negative",
      shareSignificantDominant: obs.shareDominant,
      stoufferZ: obs.stoufferZ,
      ...jointPValues(obs, nulls),
    };
    notes.push(
      `Joint test: ${m} null data sets, each made by permuting ${question === "association" ? `the trait '${s.predictor}'` : `the group labels of '${s.group}'`} across participants (each keeps their brain value, covariates and exclusion-column values)${s.rearrangementStreams === "blocks-v1" ? `, the permutations drawn in blocks of ${CURVE_BLOCK_DRAWS}, each block from its own stream of seed ${s.seed}` : `, the permutations drawn from seed ${s.seed}`}, every specification re-run on each; p = (b + 1)/(m + 1) for the median estimate, the share significant in the dominant direction and Stouffer's Z.`,
    );
  }
  specifications.sort((a, b) => a.estimate - b.estimate);
  const result: FitResult = {
    regions: [],
    participants: [],
    notes,
    kind: "specification-curve",
    estimator: s.estimator,
    inference: s.inference,
    correction: s.correction,
    seed: s.seed,
    level: FIT_LEVEL,
    region,
    question,
    specifications,
    summary,
    ...(jointTest ? { jointTest } : {}),
  };
  assertFinite(result, "result");
  onProgress?.(1);
  return result;
}
