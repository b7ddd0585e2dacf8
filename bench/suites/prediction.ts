/**
 * Cross-validated ridge prediction (issue 16) at the scale of a whole-brain
 * parcellation: 1,000 participants × 400 regions, 10 folds × 10 repeats,
 * penalty chosen by inner 5-fold cross-validation over 20 values, 1,000
 * permutations of the trait that each re-run the whole pipeline (target
 * ≤ 60 s). One decomposition per training matrix serves every penalty and
 * every permutation (Hastie, Tibshirani & Friedman 2009, §3.4.1).
 *
 * In the same run, on a smaller size, the speed-up against refitting every
 * model from scratch: per training set, per permutation, the Gram matrix is
 * formed and the normal equations (XᵀX + λI)b = Xᵀy solved by Cholesky for
 * each penalty (target ≥ 20×). The from-scratch refit is timed on a few
 * permutations and extrapolated, as the output states; its observed r is
 * checked against the engine's.
 *
 * The model is split into independent outer splits (planPrediction,
 * predictionSplit, mergePrediction); by default the suite plans the full
 * model (learning curve included), times a sample of its 100 splits (each
 * with all of its work: 6 decompositions, 1,001 pipeline runs in blocks, 24
 * learning-curve decompositions) and projects time per split × splits, with
 * the part spent preparing, on permutations and on the learning curve, the
 * multiply-adds counted and the rate reached. PREDICTION_BENCH_SAMPLE_FOLDS
 * sets the sample (default 2); PREDICTION_BENCH_FULL=1 runs the complete
 * model instead. The load average is printed with each figure: the machine's
 * 2 cores are shared. Data are invented by a seeded generator.
 */
import os from "node:os";
import {
  crossValidatedPrediction,
  planPrediction,
  predictionSplit,
} from "../../server/stats/prediction/cross-validate";
import { defaultLambdaGrid } from "../../server/stats/prediction/fold-pipeline";
import { crossValidationSplits } from "../../server/stats/prediction/folds";
import { createRearranger } from "../../server/stats/rearrangements";
import { createRng, normalDraw } from "../../server/stats/rng";

const FULL_N = 1000;
const FULL_P = 400;
const FULL_RESAMPLES = 1000;

function load(): string {
  return `load ${os
    .loadavg()
    .map((l) => l.toFixed(1))
    .join(", ")}`;
}

function seconds(start: bigint): number {
  return Number(process.hrtime.bigint() - start) / 1e9;
}

function invent(n: number, p: number, seed: number) {
  const rng = createRng(seed);
  const X = Array.from({ length: p }, () =>
    Float64Array.from({ length: n }, () => normalDraw(rng)),
  );
  const y = Float64Array.from({ length: n }, (_, i) => {
    let v = normalDraw(rng);
    for (let j = 0; j < 10; j++) v += 0.3 * X[j][i];
    return v;
  });
  return {
    participants: Array.from({ length: n }, (_, i) => `P${i + 1}`),
    X,
    regions: Array.from({ length: p }, (_, j) => `R${j + 1}`),
    y,
    covariates: [] as Float64Array[],
  };
}

/** From-scratch pipeline for one trait vector: Gram + Cholesky per training set and penalty. */
function naiveRepeatedCv(
  data: ReturnType<typeof invent>,
  y: Float64Array,
  outer: ReturnType<typeof crossValidationSplits>,
  inner: ReturnType<typeof crossValidationSplits>[],
  repeats: number,
): number {
  const n = y.length;
  const rByRepeat = Array.from({ length: repeats }, () => ({
    o: new Float64Array(n),
    p: new Float64Array(n),
  }));
  outer.forEach((split, s) => {
    const grid = defaultLambdaGrid(split.train.length);
    const mse = grid.map(() => 0);
    for (const is of inner[s]) {
      const tr = is.train.map((i) => split.train[i]);
      const he = is.held.map((i) => split.train[i]);
      const preds = fitPredict(data.X, y, tr, he, grid);
      grid.forEach((_, l) => {
        for (let i = 0; i < he.length; i++) mse[l] += (y[he[i]] - preds[l][i]) ** 2;
      });
    }
    let best = grid.length - 1;
    for (let l = grid.length - 2; l >= 0; l--) if (mse[l] < mse[best] * (1 - 1e-12)) best = l;
    const pred = fitPredict(data.X, y, split.train, split.held, [grid[best]])[0];
    for (let i = 0; i < split.held.length; i++) {
      rByRepeat[split.repeat].o[split.held[i]] = y[split.held[i]];
      rByRepeat[split.repeat].p[split.held[i]] = pred[i];
    }
  });
  let sum = 0;
  for (const { o, p } of rByRepeat) sum += pearson(o, p);
  return sum / repeats;
}

function fitPredict(
  X: Float64Array[],
  y: Float64Array,
  train: Int32Array,
  held: Int32Array,
  grid: number[],
): Float64Array[] {
  const p = X.length;
  const nt = train.length;
  const xs = X.map((col) => {
    let m = 0;
    for (const i of train) m += col[i];
    m /= nt;
    let ss = 0;
    for (const i of train) ss += (col[i] - m) ** 2;
    const sd = Math.sqrt(ss / (nt - 1));
    return {
      t: Float64Array.from(train, (i) => (col[i] - m) / sd),
      h: Float64Array.from(held, (i) => (col[i] - m) / sd),
    };
  });
  let ybar = 0;
  for (const i of train) ybar += y[i];
  ybar /= nt;
  const gram = new Float64Array(p * p);
  const xty = new Float64Array(p);
  for (let a = 0; a < p; a++) {
    for (let b = a; b < p; b++) {
      let s = 0;
      for (let i = 0; i < nt; i++) s += xs[a].t[i] * xs[b].t[i];
      gram[a * p + b] = gram[b * p + a] = s;
    }
    let s = 0;
    for (let i = 0; i < nt; i++) s += xs[a].t[i] * (y[train[i]] - ybar);
    xty[a] = s;
  }
  return grid.map((lambda) => {
    const l = Float64Array.from(gram);
    for (let a = 0; a < p; a++) l[a * p + a] += lambda;
    // Cholesky in place (lower), then two triangular solves.
    for (let j = 0; j < p; j++) {
      let d = l[j * p + j];
      for (let k = 0; k < j; k++) d -= l[j * p + k] ** 2;
      d = Math.sqrt(d);
      l[j * p + j] = d;
      for (let i = j + 1; i < p; i++) {
        let s = l[i * p + j];
        for (let k = 0; k < j; k++) s -= l[i * p + k] * l[j * p + k];
        l[i * p + j] = s / d;
      }
    }
    const z = new Float64Array(p);
    for (let i = 0; i < p; i++) {
      let s = xty[i];
      for (let k = 0; k < i; k++) s -= l[i * p + k] * z[k];
      z[i] = s / l[i * p + i];
    }
    const b = new Float64Array(p);
    for (let i = p - 1; i >= 0; i--) {
      let s = z[i];
      for (let k = i + 1; k < p; k++) s -= l[k * p + i] * b[k];
      b[i] = s / l[i * p + i];
    }
    return Float64Array.from(held, (_, h) => {
      let v = ybar;
      for (let j = 0; j < p; j++) v += xs[j].h[h] * b[j];
      return v;
    });
  });
}

function pearson(a: Float64Array, b: Float64Array): number {
  const n = a.length;
  let ma = 0;
  let mb = 0;
  for (let i = 0; i < n; i++) {
    ma += a[i];
    mb += b[i];
  }
  ma /= n;
  mb /= n;
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let i = 0; i < n; i++) {
    sab += (a[i] - ma) * (b[i] - mb);
    saa += (a[i] - ma) ** 2;
    sbb += (b[i] - mb) ** 2;
  }
  return sab / Math.sqrt(saa * sbb);
}

function speedUp(): void {
  const n = 300;
  const p = 100;
  const folds = 5;
  const repeats = 2;
  const resamples = 200;
  const naivePermutations = 4;
  const seed = 31;
  const data = invent(n, p, seed);
  console.log(
    `speed-up: ${n} participants × ${p} regions, ${folds} folds × ${repeats} repeats, inner 5-fold λ over 20 values, ${resamples} permutations`,
  );
  let start = process.hrtime.bigint();
  const result = crossValidatedPrediction(data, {
    folds,
    repeats,
    seed,
    inference: "permutation",
    resamples,
    learningCurve: false,
  });
  const engine = seconds(start);
  // Same splits as the engine: outer partitions, then each fold's inner partition, from one stream.
  const rng = createRng(seed);
  const outer = crossValidationSplits({ n, folds, repeats, rng });
  const inner = outer.map((s) =>
    crossValidationSplits({ n: s.train.length, folds: 5, repeats: 1, rng }),
  );
  const walk = createRearranger({ kind: "permutations", n, resamples, rng: createRng(seed + 2) });
  start = process.hrtime.bigint();
  let naiveR = 0;
  const permuted = new Float64Array(n);
  for (let k = 0; k <= naivePermutations; k++) {
    walk.next();
    for (let i = 0; i < n; i++) permuted[i] = data.y[walk.order[i]];
    const r = naiveRepeatedCv(data, permuted, outer, inner, repeats);
    if (k === 0) naiveR = r;
  }
  const naivePer = seconds(start) / (naivePermutations + 1);
  const naive = naivePer * (resamples + 1);
  console.log(
    `  engine ${engine.toFixed(2)} s (${load()}); from scratch ${naivePer.toFixed(2)} s per pipeline run × ${resamples + 1} runs ≈ ${naive.toFixed(1)} s (timed on ${naivePermutations + 1} runs, extrapolated; ${load()})`,
  );
  console.log(
    `  speed-up ${(naive / engine).toFixed(1)}× (target ≥ 20×); observed r engine ${result.r?.toFixed(12)} vs from scratch ${naiveR.toFixed(12)}`,
  );
}

/** The whole model at full size, as crossValidatedPrediction runs it. */
function fullSize(): void {
  const data = invent(FULL_N, FULL_P, 2026);
  console.log(
    `full size, complete run: ${FULL_N} participants × ${FULL_P} regions, 10 folds × 10 repeats, inner 5-fold λ over 20 values, ${FULL_RESAMPLES} permutations`,
  );
  const start = process.hrtime.bigint();
  const cpu = process.cpuUsage();
  let lastReport = 0;
  const result = crossValidatedPrediction(data, {
    folds: 10,
    repeats: 10,
    seed: 2026,
    inference: "permutation",
    resamples: FULL_RESAMPLES,
    learningCurve: true,
    onProgress: (fraction) => {
      if (fraction - lastReport >= 0.1) {
        lastReport = fraction;
        console.log(`  … ${(fraction * 100).toFixed(0)} % after ${seconds(start).toFixed(0)} s`);
      }
    },
  });
  const used = process.cpuUsage(cpu);
  console.log(
    `  ${seconds(start).toFixed(1)} s wall, ${((used.user + used.system) / 1e6).toFixed(1)} s CPU (target ≤ 60 s; ${load()}); r = ${result.r?.toFixed(3)}, permutation p(r) = ${result.permutation?.pR}`,
  );
}

/**
 * Multiply-adds of one split's matrix work, counted from the algorithm
 * (server/stats/prediction/): per prepared training set the upper triangle
 * of the Gram matrix (n_t·p·r/2), the tridiagonal reduction and the
 * accumulation of Q (2r³/3 each), M and W (n·p·r); per trait G = Mᵀy (n_t·r)
 * and the held-out predictions (n_h·r per penalty); per learning-curve
 * training set the Gram matrix, the reduction, Xᵀy and per penalty the
 * weights and predictions (n_h·p, and n_t·p in the dual form).
 */
function splitMultiplyAdds(
  plan: ReturnType<typeof planPrediction>,
  s: number,
): { prepare: number; perTrait: number; curve: number } {
  const p = plan.p;
  const grid = plan.lambda === null ? (plan.lambdaGrid?.length ?? 20) : 1;
  const prepared = (nt: number, nh: number) => {
    const r = Math.min(nt, p);
    return { work: (nt * p * r) / 2 + (4 * r ** 3) / 3 + (nt + nh) * p * r, r };
  };
  const single = (nt: number, nh: number, penalties: number) => {
    const r = Math.min(nt, p);
    const perPenalty = 2 * r * r + nh * p + (r < p ? nt * p : 0);
    return (nt * p * r) / 2 + (2 * r ** 3) / 3 + nt * p + penalties * perPenalty;
  };
  const split = plan.splits[s];
  const outer = prepared(split.train.length, split.held.length);
  let prepare = outer.work;
  let perTrait = split.train.length * outer.r + split.held.length * outer.r;
  for (const i of plan.inner[s] ?? []) {
    const st = prepared(i.train.length, i.held.length);
    prepare += st.work;
    perTrait += i.train.length * st.r + i.held.length * st.r * grid;
  }
  let curve = 0;
  for (const c of plan.curve?.[s] ?? []) {
    if (c.train === null) continue;
    curve += single(c.train.length, split.held.length, 1);
    for (const i of c.inner ?? []) curve += single(i.train.length, i.held.length, grid);
  }
  return { prepare: prepare + perTrait, perTrait, curve };
}

/**
 * The full-size model planned, a sample of its 100 outer splits computed as
 * a worker would (predictionSplit: decompositions, the observed trait and
 * 1,000 permutations in blocks, the learning curve), projected to all splits.
 */
function sampledSplits(sample: number): void {
  const data = invent(FULL_N, FULL_P, 2026);
  let start = process.hrtime.bigint();
  const plan = planPrediction(data, {
    folds: 10,
    repeats: 10,
    seed: 2026,
    inference: "permutation",
    resamples: FULL_RESAMPLES,
    learningCurve: true,
  });
  const planning = seconds(start);
  const splits = plan.splits.length;
  console.log(
    `full size, ${sample} of ${splits} outer splits timed: ${FULL_N} participants × ${FULL_P} regions, inner 5-fold λ over 20 values, ${FULL_RESAMPLES} permutations, learning curve; planned in ${planning.toFixed(1)} s`,
  );
  const timings = { prepare: 0, permutations: 0, learningCurve: 0 };
  const cpu = process.cpuUsage();
  start = process.hrtime.bigint();
  let work = { prepare: 0, permutations: 0, curve: 0 };
  for (let k = 0; k < sample; k++) {
    const s = Math.floor((k * splits) / sample);
    predictionSplit(plan, data, s, { timings });
    const count = splitMultiplyAdds(plan, s);
    work = {
      prepare: work.prepare + count.prepare,
      permutations: work.permutations + count.perTrait * plan.permutationCount,
      curve: work.curve + count.curve,
    };
  }
  const wall = seconds(start);
  const used = process.cpuUsage(cpu);
  const perSplit = wall / sample;
  const part = (name: string, secs: number, madds: number) =>
    `${name} ${(secs / sample).toFixed(2)} s (${(madds / sample / 1e9).toFixed(1)} × 10⁹ multiply-adds, ${(madds / secs / 1e9).toFixed(2)} × 10⁹/s)`;
  console.log(
    `  per split: ${perSplit.toFixed(2)} s wall, ${((used.user + used.system) / 1e6 / sample).toFixed(2)} s CPU (${load()})`,
  );
  console.log(
    `  per split: ${part("prepare", timings.prepare, work.prepare)}; ${part(`${plan.permutationCount} permutations`, timings.permutations, work.permutations)}; ${part("learning curve", timings.learningCurve, work.curve)}`,
  );
  const total = work.prepare + work.permutations + work.curve;
  const cpuPerSplit = (used.user + used.system) / 1e6 / sample;
  console.log(
    `  projected to ${splits} splits: ≈ ${(perSplit * splits).toFixed(0)} s wall on one thread at this load; ≈ ${(cpuPerSplit * splits).toFixed(0)} s of CPU, so ≈ ${((cpuPerSplit * splits) / 2).toFixed(0)} s with the splits on 2 unshared threads (target ≤ 60 s); ≈ ${(((total / sample) * splits) / 1e12).toFixed(2)} × 10¹² multiply-adds in all, ${(total / sample / cpuPerSplit / 1e9).toFixed(2)} × 10⁹ per CPU second`,
  );
}

export default async function run(): Promise<void> {
  const load = os.loadavg();
  console.log(
    `  (load average at start: ${load.map((l) => l.toFixed(1)).join(", ")} on ${os.cpus().length} cores; timings stretch when other work shares the cores)`,
  );
  speedUp();
  if (process.env.PREDICTION_BENCH_FULL === "1") fullSize();
  else sampledSplits(Number(process.env.PREDICTION_BENCH_SAMPLE_FOLDS ?? 2));
}
