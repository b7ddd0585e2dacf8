/**
 * The fast kernel behind Freedman–Lane and sign-flip permutation inference
 * for a linear model fitted to many regions at once.
 *
 * Method (Freedman & Lane 1983, Journal of Business & Economic Statistics
 * 1:292–298; sign flipping as in Winkler et al. 2014, NeuroImage 92:381–397):
 * with X = [Z, x] (x the tested column, Z the rest), fit the reduced model Z,
 * keep its residuals e = (I − H_Z) y, rearrange them (P e or S e), add back the
 * reduced fitted values and refit the full model. The statistic is the t of
 * x's coefficient.
 *
 * Algebra that makes it fast: let X = Q R be the thin QR factorisation with the
 * tested column last, so Q has orthonormal columns and R_pp > 0. The reduced
 * fitted values lie in span(Z) ⊂ span(X), so for y* = H_Z y + P e:
 *   β*_x = v_p / R_pp,  RSS* = ‖P e‖² − ‖Q′P e‖² = e′e − Σ_k v_k²,
 *   t* = v_p / √(RSS* ÷ (n − p)),   where v = Q′ P e = (P′Q)′ e.
 * Only v changes between rearrangements: per rearrangement the rows of Q are
 * rearranged (n·p work) and the p × n by n × R product V = Q̃′E is formed
 * (2·n·p·R flops), followed by O(p·R) work for the statistics. The product is
 * register-blocked: two regions per pass and up to five columns of Q̃ per
 * pass, so every accumulator stays in a register.
 *
 * Everything here is pure and deterministic; the worker-thread driver calls
 * the same functions on slices of regions.
 */
import { StatsError } from "./errors";
import {
  createRearranger,
  extremeThreshold,
  progressReporter,
  type RearrangementKind,
} from "./rearrangements";
import type { Rng } from "./rng";

/** Everything about the design that the rearrangement loop needs; structured-cloneable. */
export interface LinearPermutationPlan {
  n: number;
  p: number;
  /** residual degrees of freedom n − p */
  df: number;
  kind: RearrangementKind;
  /** "subsets" only: size of the group listed first in `groupOrder` */
  firstGroupSize: number;
  resamples: number;
  /** n × p row-major orthonormal basis of the design, tested column last */
  basis: Float64Array;
  /** "subsets" only: rows of the first group, then rows of the second */
  groupOrder: Int32Array | null;
}

export interface LinearPermutationSetup {
  plan: LinearPermutationPlan;
  /** regions × n, region-major: reduced-model residuals e */
  residuals: Float64Array;
  /** per region e′e */
  residualSquares: Float64Array;
  /** per region the observed t of the tested coefficient */
  observed: Float64Array;
}

/** Below this fraction of ‖e‖², a residual sum of squares counts as an exact fit. */
const EXACT_FIT = 1e-12;
/** A design column whose norm after orthogonalisation falls below this fraction of its own norm is dependent. */
const RANK_TOLERANCE = 1e-10;

/**
 * Validates the inputs of a linear permutation test, factorises the design,
 * computes reduced-model residuals and the observed statistics.
 *
 * Cost O(n·p² + n·p·R) for R regions. Throws StatsError naming the field
 * (design, tested, y[r], resamples) when the input is malformed, the design is
 * rank deficient, n ≤ p, or a region has no residual variation.
 */
export function prepareLinearPermutation(input: {
  design: Float64Array;
  n: number;
  p: number;
  tested: number;
  y: readonly Float64Array[];
  scheme: "sign-flip" | "freedman-lane";
  resamples: number;
}): LinearPermutationSetup {
  const name = "linearPermutationTest";
  const { design, n, p, tested, y, scheme, resamples } = input;
  if (!(Number.isInteger(p) && p >= 1)) throw new StatsError(`${name} requires p ≥ 1 design columns (got ${p})`);
  if (!(Number.isInteger(n) && n > p)) {
    throw new StatsError(`${name} requires more participants than design columns (n = ${n}, p = ${p})`);
  }
  if (design.length !== n * p) {
    throw new StatsError(`${name} requires design to hold n × p = ${n * p} values (got ${design.length})`);
  }
  for (let i = 0; i < design.length; i++) {
    if (!Number.isFinite(design[i])) {
      throw new StatsError(`${name} requires finite design values (row ${Math.floor(i / p)}, column ${i % p})`);
    }
  }
  if (!(Number.isInteger(tested) && tested >= 0 && tested < p)) {
    throw new StatsError(`${name} requires tested to be a column index between 0 and ${p - 1} (got ${tested})`);
  }
  if (scheme !== "sign-flip" && scheme !== "freedman-lane") {
    throw new StatsError(`${name} requires scheme "sign-flip" or "freedman-lane" (got ${String(scheme)})`);
  }
  if (!(Number.isInteger(resamples) && resamples >= 1)) {
    throw new StatsError(`${name} requires resamples to be a positive integer (got ${resamples})`);
  }
  if (y.length === 0) throw new StatsError(`${name} requires at least one region`);
  for (let r = 0; r < y.length; r++) {
    if (y[r].length !== n) throw new StatsError(`${name} requires y[${r}] to hold n = ${n} values (got ${y[r].length})`);
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(y[r][i])) throw new StatsError(`${name} requires finite values (y[${r}], row ${i})`);
    }
  }

  const basis = orthonormalBasis(design, n, p, tested, name);

  // Two-group labels without covariates: exact enumeration over C(n, n1).
  let kind: RearrangementKind = scheme === "sign-flip" ? "signs" : "permutations";
  let groupOrder: Int32Array | null = null;
  let firstGroupSize = 0;
  if (scheme === "freedman-lane" && p === 2) {
    const other = 1 - tested;
    let constant = true;
    const values: number[] = [];
    for (let i = 0; i < n; i++) {
      if (design[i * p + other] !== design[other]) constant = false;
      const v = design[i * p + tested];
      if (!values.includes(v)) values.push(v);
    }
    if (constant && values.length === 2) {
      kind = "subsets";
      groupOrder = new Int32Array(n);
      let w = 0;
      for (let i = 0; i < n; i++) if (design[i * p + tested] === values[0]) groupOrder[w++] = i;
      firstGroupSize = w;
      for (let i = 0; i < n; i++) if (design[i * p + tested] !== values[0]) groupOrder[w++] = i;
    }
  }

  const regions = y.length;
  const residuals = new Float64Array(regions * n);
  const residualSquares = new Float64Array(regions);
  for (let r = 0; r < regions; r++) {
    const e = residuals.subarray(r * n, (r + 1) * n);
    e.set(y[r]);
    let yy = 0;
    for (let i = 0; i < n; i++) yy += e[i] * e[i];
    // Project out the reduced model's columns twice (Gram–Schmidt "twice is enough").
    for (let pass = 0; pass < 2; pass++) {
      for (let k = 0; k < p - 1; k++) {
        let dot = 0;
        for (let i = 0; i < n; i++) dot += basis[i * p + k] * e[i];
        for (let i = 0; i < n; i++) e[i] -= dot * basis[i * p + k];
      }
    }
    let ee = 0;
    for (let i = 0; i < n; i++) ee += e[i] * e[i];
    if (!(ee > 1e-20 * yy)) {
      throw new StatsError(`${name} requires residual variation after the reduced model (y[${r}])`);
    }
    residualSquares[r] = ee;
  }

  const plan: LinearPermutationPlan = { n, p, df: n - p, kind, firstGroupSize, resamples, basis, groupOrder };
  const observed = new Float64Array(regions);
  const work = createWorkspace(plan, regions);
  identityColumns(plan, work.columns);
  regionStatistics(plan, work, residuals, residualSquares, regions, observed);
  for (let r = 0; r < regions; r++) {
    if (!Number.isFinite(observed[r])) {
      throw new StatsError(`${name} requires residual variation after the full model (y[${r}] is fitted exactly)`);
    }
  }
  return { plan, residuals, residualSquares, observed };
}

/**
 * Modified Gram–Schmidt with reorthogonalisation on the design's columns,
 * reordered so the tested column is last. Returns Q (n × p, row-major).
 * Cost O(n·p²). Throws StatsError when a column depends on the others.
 */
function orthonormalBasis(design: Float64Array, n: number, p: number, tested: number, name: string): Float64Array {
  const columns: number[] = [];
  for (let k = 0; k < p; k++) if (k !== tested) columns.push(k);
  columns.push(tested);
  const q = new Float64Array(n * p);
  const col = new Float64Array(n);
  for (let k = 0; k < p; k++) {
    const source = columns[k];
    let norm0 = 0;
    for (let i = 0; i < n; i++) {
      col[i] = design[i * p + source];
      norm0 += col[i] * col[i];
    }
    for (let pass = 0; pass < 2; pass++) {
      for (let j = 0; j < k; j++) {
        let dot = 0;
        for (let i = 0; i < n; i++) dot += q[i * p + j] * col[i];
        for (let i = 0; i < n; i++) col[i] -= dot * q[i * p + j];
      }
    }
    let norm = 0;
    for (let i = 0; i < n; i++) norm += col[i] * col[i];
    if (!(norm0 > 0) || !(Math.sqrt(norm) > RANK_TOLERANCE * Math.sqrt(norm0))) {
      throw new StatsError(`${name} requires a full-rank design (column ${source} depends on the others)`);
    }
    const s = 1 / Math.sqrt(norm);
    for (let i = 0; i < n; i++) q[i * p + k] = col[i] * s;
  }
  return q;
}

export interface KernelWorkspace {
  /** rearranged basis, column-major: columns[k·n + i] */
  columns: Float64Array;
  /** products, region-major: products[r·p + k] */
  products: Float64Array;
}

export function createWorkspace(plan: LinearPermutationPlan, regions: number): KernelWorkspace {
  return { columns: new Float64Array(plan.n * plan.p), products: new Float64Array(regions * plan.p) };
}

function identityColumns(plan: LinearPermutationPlan, columns: Float64Array): void {
  const { n, p, basis } = plan;
  for (let i = 0; i < n; i++) for (let k = 0; k < p; k++) columns[k * n + i] = basis[i * p + k];
}

/**
 * Writes the rearranged basis Q̃ (column-major) for the current
 * rearrangement: sign flips scale rows; label assignments and permutations
 * move rows (moving rows of Q by σ equals permuting e by σ⁻¹, and both walk
 * the same set of rearrangements). Cost O(n·p).
 */
function rearrangedColumns(plan: LinearPermutationPlan, order: Int32Array, signs: Float64Array, columns: Float64Array): void {
  const { n, p, basis, kind, groupOrder } = plan;
  if (kind === "signs") {
    for (let i = 0; i < n; i++) {
      const s = signs[i];
      for (let k = 0; k < p; k++) columns[k * n + i] = s * basis[i * p + k];
    }
  } else if (kind === "permutations") {
    for (let i = 0; i < n; i++) {
      const src = order[i] * p;
      for (let k = 0; k < p; k++) columns[k * n + i] = basis[src + k];
    }
  } else {
    // Slot j of the walk stands for unit groupOrder[j]; the units in the
    // first n1 slots of `order` receive first-group rows.
    const g = groupOrder as Int32Array;
    for (let j = 0; j < n; j++) {
      const unit = g[order[j]];
      const src = g[j] * p;
      for (let k = 0; k < p; k++) columns[k * n + unit] = basis[src + k];
    }
  }
}

/**
 * t statistics of the tested coefficient for every region given the current
 * rearranged basis in `work.columns`. Cost 2·n·p·R flops + O(p·R).
 * A rearrangement that the full model fits exactly (RSS* ≤ 1e-12·e′e) gets
 * |t*| = Infinity, i.e. it counts as extreme (conservative).
 */
export function regionStatistics(
  plan: LinearPermutationPlan,
  work: KernelWorkspace,
  residuals: Float64Array,
  residualSquares: Float64Array,
  regions: number,
  out: Float64Array,
): void {
  const { n, p, df } = plan;
  const v = work.products;
  blockedProducts(work.columns, n, p, residuals, regions, v);
  for (let r = 0; r < regions; r++) {
    let ss = 0;
    const o = r * p;
    for (let k = 0; k < p; k++) ss += v[o + k] * v[o + k];
    const ee = residualSquares[r];
    const rss = ee - ss;
    const last = v[o + p - 1];
    out[r] = rss > EXACT_FIT * ee ? last / Math.sqrt(rss / df) : last < 0 ? -Infinity : Infinity;
  }
}

/**
 * V = Q̃′E: products[r·p + k] = Σ_i columns[k·n + i]·residuals[r·n + i].
 * Columns are processed in chunks of at most five, regions two at a time.
 */
function blockedProducts(
  columns: Float64Array,
  n: number,
  p: number,
  residuals: Float64Array,
  regions: number,
  products: Float64Array,
): void {
  const chunks = Math.ceil(p / 5);
  let k0 = 0;
  for (let c = 0; c < chunks; c++) {
    const width = Math.ceil((p - k0) / (chunks - c));
    switch (width) {
      case 1:
        products1(columns, k0, n, p, residuals, regions, products);
        break;
      case 2:
        products2(columns, k0, n, p, residuals, regions, products);
        break;
      case 3:
        products3(columns, k0, n, p, residuals, regions, products);
        break;
      case 4:
        products4(columns, k0, n, p, residuals, regions, products);
        break;
      default:
        products5(columns, k0, n, p, residuals, regions, products);
    }
    k0 += width;
  }
}

// The five register-blocked loops below differ only in how many columns they
// carry. Each pass reads two regions' residuals once and keeps 2 × width
// accumulators; with an odd number of regions the last pass reads the last
// region twice and writes the same values twice.

function products1(q: Float64Array, k0: number, n: number, p: number, e: Float64Array, regions: number, v: Float64Array): void {
  const c0 = k0 * n;
  for (let r = 0; r < regions; r += 2) {
    const s = r + 1 < regions ? r + 1 : r;
    const e0 = r * n;
    const e1 = s * n;
    let a0 = 0;
    let b0 = 0;
    for (let i = 0; i < n; i++) {
      const x = e[e0 + i];
      const y = e[e1 + i];
      const t = q[c0 + i];
      a0 += t * x;
      b0 += t * y;
    }
    v[r * p + k0] = a0;
    v[s * p + k0] = b0;
  }
}

function products2(q: Float64Array, k0: number, n: number, p: number, e: Float64Array, regions: number, v: Float64Array): void {
  const c0 = k0 * n;
  const c1 = c0 + n;
  for (let r = 0; r < regions; r += 2) {
    const s = r + 1 < regions ? r + 1 : r;
    const e0 = r * n;
    const e1 = s * n;
    let a0 = 0;
    let a1 = 0;
    let b0 = 0;
    let b1 = 0;
    for (let i = 0; i < n; i++) {
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[c0 + i];
      a0 += t * x;
      b0 += t * y;
      t = q[c1 + i];
      a1 += t * x;
      b1 += t * y;
    }
    const o = r * p + k0;
    const u = s * p + k0;
    v[o] = a0;
    v[o + 1] = a1;
    v[u] = b0;
    v[u + 1] = b1;
  }
}

function products3(q: Float64Array, k0: number, n: number, p: number, e: Float64Array, regions: number, v: Float64Array): void {
  const c0 = k0 * n;
  const c1 = c0 + n;
  const c2 = c1 + n;
  for (let r = 0; r < regions; r += 2) {
    const s = r + 1 < regions ? r + 1 : r;
    const e0 = r * n;
    const e1 = s * n;
    let a0 = 0;
    let a1 = 0;
    let a2 = 0;
    let b0 = 0;
    let b1 = 0;
    let b2 = 0;
    for (let i = 0; i < n; i++) {
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[c0 + i];
      a0 += t * x;
      b0 += t * y;
      t = q[c1 + i];
      a1 += t * x;
      b1 += t * y;
      t = q[c2 + i];
      a2 += t * x;
      b2 += t * y;
    }
    const o = r * p + k0;
    const u = s * p + k0;
    v[o] = a0;
    v[o + 1] = a1;
    v[o + 2] = a2;
    v[u] = b0;
    v[u + 1] = b1;
    v[u + 2] = b2;
  }
}

function products4(q: Float64Array, k0: number, n: number, p: number, e: Float64Array, regions: number, v: Float64Array): void {
  const c0 = k0 * n;
  const c1 = c0 + n;
  const c2 = c1 + n;
  const c3 = c2 + n;
  for (let r = 0; r < regions; r += 2) {
    const s = r + 1 < regions ? r + 1 : r;
    const e0 = r * n;
    const e1 = s * n;
    let a0 = 0;
    let a1 = 0;
    let a2 = 0;
    let a3 = 0;
    let b0 = 0;
    let b1 = 0;
    let b2 = 0;
    let b3 = 0;
    for (let i = 0; i < n; i++) {
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[c0 + i];
      a0 += t * x;
      b0 += t * y;
      t = q[c1 + i];
      a1 += t * x;
      b1 += t * y;
      t = q[c2 + i];
      a2 += t * x;
      b2 += t * y;
      t = q[c3 + i];
      a3 += t * x;
      b3 += t * y;
    }
    const o = r * p + k0;
    const u = s * p + k0;
    v[o] = a0;
    v[o + 1] = a1;
    v[o + 2] = a2;
    v[o + 3] = a3;
    v[u] = b0;
    v[u + 1] = b1;
    v[u + 2] = b2;
    v[u + 3] = b3;
  }
}

function products5(q: Float64Array, k0: number, n: number, p: number, e: Float64Array, regions: number, v: Float64Array): void {
  const c0 = k0 * n;
  const c1 = c0 + n;
  const c2 = c1 + n;
  const c3 = c2 + n;
  const c4 = c3 + n;
  for (let r = 0; r < regions; r += 2) {
    const s = r + 1 < regions ? r + 1 : r;
    const e0 = r * n;
    const e1 = s * n;
    let a0 = 0;
    let a1 = 0;
    let a2 = 0;
    let a3 = 0;
    let a4 = 0;
    let b0 = 0;
    let b1 = 0;
    let b2 = 0;
    let b3 = 0;
    let b4 = 0;
    for (let i = 0; i < n; i++) {
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[c0 + i];
      a0 += t * x;
      b0 += t * y;
      t = q[c1 + i];
      a1 += t * x;
      b1 += t * y;
      t = q[c2 + i];
      a2 += t * x;
      b2 += t * y;
      t = q[c3 + i];
      a3 += t * x;
      b3 += t * y;
      t = q[c4 + i];
      a4 += t * x;
      b4 += t * y;
    }
    const o = r * p + k0;
    const u = s * p + k0;
    v[o] = a0;
    v[o + 1] = a1;
    v[o + 2] = a2;
    v[o + 3] = a3;
    v[o + 4] = a4;
    v[u] = b0;
    v[u + 1] = b1;
    v[u + 2] = b2;
    v[u + 3] = b3;
    v[u + 4] = b4;
  }
}

export interface RearrangementCounts {
  /** per region: number of rearrangements (identity included) with |t*| ≥ |t| */
  counts: Float64Array;
  /** per rearrangement: max over these regions of |t*| (when requested) */
  maxAbs: Float64Array | null;
  /** per region: t* for every rearrangement, identity first (when requested) */
  nulls: Float32Array[] | null;
  exact: boolean;
  rearrangements: number;
}

/**
 * Runs every rearrangement of the plan over a block of regions and counts,
 * per region, the rearranged statistics at least as extreme as the observed
 * one (two-sided, with the tie tolerance of `extremeThreshold`).
 *
 * Cost per rearrangement: O(n·p) to rearrange the basis plus 2·n·p·R flops.
 * The sequence of rearrangements depends only on the plan and `rng`, so two
 * calls on different region blocks with equally seeded generators walk the
 * same rearrangements. Throws StatsError with code "cancelled" when
 * `shouldCancel()` returns true (checked after every rearrangement).
 */
export function countExtremeRearrangements(input: {
  plan: LinearPermutationPlan;
  residuals: Float64Array;
  residualSquares: Float64Array;
  observed: Float64Array;
  rng: Rng;
  maxT: boolean;
  keepNull: boolean;
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}): RearrangementCounts {
  const { plan, residuals, residualSquares, observed, rng } = input;
  const regions = residualSquares.length;
  const walk = createRearranger({
    kind: plan.kind,
    n: plan.n,
    resamples: plan.resamples,
    rng,
    firstGroupSize: plan.firstGroupSize,
  });
  const total = walk.total;
  const thresholds = new Float64Array(regions);
  for (let r = 0; r < regions; r++) thresholds[r] = extremeThreshold(observed[r]);
  const counts = new Float64Array(regions);
  const maxAbs = input.maxT ? new Float64Array(total) : null;
  const nulls = input.keepNull ? Array.from({ length: regions }, () => new Float32Array(total)) : null;
  const work = createWorkspace(plan, regions);
  const t = new Float64Array(regions);
  const report = progressReporter("linearPermutationTest", total, input.onProgress, input.shouldCancel);
  for (let k = 0; k < total; k++) {
    walk.next();
    rearrangedColumns(plan, walk.order, walk.signs, work.columns);
    regionStatistics(plan, work, residuals, residualSquares, regions, t);
    let max = 0;
    for (let r = 0; r < regions; r++) {
      const a = Math.abs(t[r]);
      if (a >= thresholds[r]) counts[r]++;
      if (a > max) max = a;
    }
    if (maxAbs) maxAbs[k] = max;
    if (nulls) for (let r = 0; r < regions; r++) nulls[r][k] = t[r];
    report(k + 1);
  }
  return { counts, maxAbs, nulls, exact: walk.exact, rearrangements: total };
}
