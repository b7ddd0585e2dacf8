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
 * pass, so every accumulator stays in a register; Q̃ is kept row by row, so a
 * moved row is one read of p neighbouring numbers.
 *
 * Regions that differ in participants (empty cells) come in blocks, one
 * block per set of participants, each with its own basis; every block sees
 * the same draw over all the blocks' participants (see
 * `createSharedRearranger`). A block of two or more regions keeps the
 * batched product above; a block of one region rearranges its residuals
 * instead of the basis rows (m gathers instead of m·p) and takes the draws
 * 32 at a time, so its own basis stays in cache while the batched product
 * runs over those 32 rearranged residual vectors as it runs over regions
 * (one pass over 400 distinct bases per rearrangement is bound by memory).
 *
 * Everything here is pure and deterministic; the worker-thread driver calls
 * the same functions on slices of regions.
 */
import { StatsError } from "./errors";
import {
  countRearrangements,
  createRearranger,
  createSharedRearranger,
  extremeThreshold,
  memberPositions,
  progressReporter,
  type RearrangementKind,
  regionSigns,
  regionSources,
} from "./rearrangements";
import { createBlockRng, type Rng } from "./rng";

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
  /**
   * The draw is shared with regions on other participants: rearrange by
   * sign vectors or orders of all participants, never by two-group label
   * assignments.
   */
  shared?: boolean;
}): LinearPermutationSetup {
  const name = "linearPermutationTest";
  const { design, n, p, tested, y, scheme, resamples } = input;
  if (!(Number.isInteger(p) && p >= 1))
    throw new StatsError(`${name} requires p ≥ 1 design columns (got ${p})`);
  if (!(Number.isInteger(n) && n > p)) {
    throw new StatsError(
      `${name} requires more participants than design columns (n = ${n}, p = ${p})`,
    );
  }
  if (design.length !== n * p) {
    throw new StatsError(
      `${name} requires design to hold n × p = ${n * p} values (got ${design.length})`,
    );
  }
  for (let i = 0; i < design.length; i++) {
    if (!Number.isFinite(design[i])) {
      throw new StatsError(
        `${name} requires finite design values (row ${Math.floor(i / p)}, column ${i % p})`,
      );
    }
  }
  if (!(Number.isInteger(tested) && tested >= 0 && tested < p)) {
    throw new StatsError(
      `${name} requires tested to be a column index between 0 and ${p - 1} (got ${tested})`,
    );
  }
  if (scheme !== "sign-flip" && scheme !== "freedman-lane") {
    throw new StatsError(
      `${name} requires scheme "sign-flip" or "freedman-lane" (got ${String(scheme)})`,
    );
  }
  if (!(Number.isInteger(resamples) && resamples >= 1)) {
    throw new StatsError(`${name} requires resamples to be a positive integer (got ${resamples})`);
  }
  if (y.length === 0) throw new StatsError(`${name} requires at least one region`);
  for (let r = 0; r < y.length; r++) {
    if (y[r].length !== n)
      throw new StatsError(`${name} requires y[${r}] to hold n = ${n} values (got ${y[r].length})`);
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(y[r][i]))
        throw new StatsError(`${name} requires finite values (y[${r}], row ${i})`);
    }
  }

  const basis = orthonormalBasis(design, n, p, tested, name);

  // Two-group labels without covariates: exact enumeration over C(n, n1).
  let kind: RearrangementKind = scheme === "sign-flip" ? "signs" : "permutations";
  let groupOrder: Int32Array | null = null;
  let firstGroupSize = 0;
  if (scheme === "freedman-lane" && p === 2 && input.shared !== true) {
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

  const plan: LinearPermutationPlan = {
    n,
    p,
    df: n - p,
    kind,
    firstGroupSize,
    resamples,
    basis,
    groupOrder,
  };
  const observed = new Float64Array(regions);
  const work = createWorkspace(plan, regions);
  work.rows.set(plan.basis);
  regionStatistics(plan, work, residuals, residualSquares, regions, observed);
  for (let r = 0; r < regions; r++) {
    if (!Number.isFinite(observed[r])) {
      throw new StatsError(
        `${name} requires residual variation after the full model (y[${r}] is fitted exactly)`,
      );
    }
  }
  return { plan, residuals, residualSquares, observed };
}

/**
 * Modified Gram–Schmidt with reorthogonalisation on the design's columns,
 * reordered so the tested column is last. Returns Q (n × p, row-major).
 * Cost O(n·p²). Throws StatsError when a column depends on the others.
 */
function orthonormalBasis(
  design: Float64Array,
  n: number,
  p: number,
  tested: number,
  name: string,
): Float64Array {
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
      throw new StatsError(
        `${name} requires a full-rank design (column ${source} depends on the others)`,
      );
    }
    const s = 1 / Math.sqrt(norm);
    for (let i = 0; i < n; i++) q[i * p + k] = col[i] * s;
  }
  return q;
}

export interface KernelWorkspace {
  /** rearranged basis, row-major like the plan's: rows[i·p + k] */
  rows: Float64Array;
  /** products, region-major: products[r·p + k] */
  products: Float64Array;
}

export function createWorkspace(plan: LinearPermutationPlan, regions: number): KernelWorkspace {
  return {
    rows: new Float64Array(plan.n * plan.p),
    products: new Float64Array(regions * plan.p),
  };
}

/**
 * Writes the rearranged basis Q̃ (row-major, as the plan's basis) for the
 * current rearrangement: sign flips scale rows; label assignments and
 * permutations move rows (moving rows of Q by σ equals permuting e by σ⁻¹,
 * and both walk the same set of rearrangements). A moved row is its p
 * numbers side by side, so each row costs one read from the basis
 * wherever the rearrangement sends it. Cost O(n·p).
 */
function rearrangedRows(
  plan: LinearPermutationPlan,
  order: Int32Array,
  signs: Float64Array,
  rows: Float64Array,
): void {
  const { n, p, basis, kind, groupOrder } = plan;
  if (kind === "signs") {
    for (let i = 0; i < n; i++) {
      const s = signs[i];
      const o = i * p;
      for (let k = 0; k < p; k++) rows[o + k] = s * basis[o + k];
    }
  } else if (kind === "permutations") {
    if (p === 5) {
      // The common case (an intercept, the tested term and three covariates) written out.
      for (let i = 0, o = 0; i < n; i++, o += 5) {
        const src = order[i] * 5;
        rows[o] = basis[src];
        rows[o + 1] = basis[src + 1];
        rows[o + 2] = basis[src + 2];
        rows[o + 3] = basis[src + 3];
        rows[o + 4] = basis[src + 4];
      }
      return;
    }
    for (let i = 0; i < n; i++) {
      const src = order[i] * p;
      const o = i * p;
      for (let k = 0; k < p; k++) rows[o + k] = basis[src + k];
    }
  } else {
    // Slot j of the walk stands for unit groupOrder[j]; the units in the
    // first n1 slots of `order` receive first-group rows.
    const g = groupOrder as Int32Array;
    for (let j = 0; j < n; j++) {
      const o = g[order[j]] * p;
      const src = g[j] * p;
      for (let k = 0; k < p; k++) rows[o + k] = basis[src + k];
    }
  }
}

/**
 * t statistics of the tested coefficient for every region given the current
 * rearranged basis in `work.rows`. Cost 2·n·p·R flops + O(p·R).
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
  blockedProducts(work.rows, n, p, residuals, regions, v);
  for (let r = 0; r < regions; r++) out[r] = tStatistic(v, r * p, p, residualSquares[r], df);
}

/**
 * V = Q̃′E: products[r·p + k] = Σ_i rows[i·p + k]·residuals[r·n + i].
 * Columns are processed in chunks of at most five, regions two at a time.
 * Each loop below reads its chunk's rows at a stride written into it (its
 * width): with the stride a variable the same loop ran ~7 % slower in V8.
 * With p ≤ 5 the rows are read where they are; a wider basis has each
 * chunk's columns copied side by side first (n·width numbers against
 * 2·n·width·regions multiply–adds). Each product adds the same terms in
 * the same order either way.
 */
function blockedProducts(
  rows: Float64Array,
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
    const q = width === p ? rows : columnsSideBySide(rows, n, p, k0, width);
    switch (width) {
      case 1:
        products1(q, k0, n, p, residuals, regions, products);
        break;
      case 2:
        products2(q, k0, n, p, residuals, regions, products);
        break;
      case 3:
        products3(q, k0, n, p, residuals, regions, products);
        break;
      case 4:
        products4(q, k0, n, p, residuals, regions, products);
        break;
      default:
        products5(q, k0, n, p, residuals, regions, products);
    }
    k0 += width;
  }
}

/** Scratch for `columnsSideBySide`, grown as needed (one per thread: each has its own module). */
let sideBySide = new Float64Array(0);

/** Columns k0 … k0 + width − 1 of the row-major n × p `rows`, as a row-major n × width array. Cost O(n·width). */
function columnsSideBySide(
  rows: Float64Array,
  n: number,
  p: number,
  k0: number,
  width: number,
): Float64Array {
  if (sideBySide.length < n * width) sideBySide = new Float64Array(n * width);
  for (let i = 0, o = 0, src = k0; i < n; i++, src += p)
    for (let k = 0; k < width; k++, o++) sideBySide[o] = rows[src + k];
  return sideBySide;
}

// The five register-blocked loops below differ only in how many columns they
// carry. `q` holds just those columns, row by row (stride = width); the
// products go to columns k0 … of `v` (p per region). Each pass reads two
// regions' residuals once and keeps 2 × width accumulators; with an odd
// number of regions the last pass reads the last region twice and writes the
// same values twice.

function products1(
  q: Float64Array,
  k0: number,
  n: number,
  p: number,
  e: Float64Array,
  regions: number,
  v: Float64Array,
): void {
  for (let r = 0; r < regions; r += 2) {
    const s = r + 1 < regions ? r + 1 : r;
    const e0 = r * n;
    const e1 = s * n;
    let a0 = 0;
    let b0 = 0;
    for (let i = 0; i < n; i++) {
      const x = e[e0 + i];
      const y = e[e1 + i];
      const t = q[i];
      a0 += t * x;
      b0 += t * y;
    }
    v[r * p + k0] = a0;
    v[s * p + k0] = b0;
  }
}

function products2(
  q: Float64Array,
  k0: number,
  n: number,
  p: number,
  e: Float64Array,
  regions: number,
  v: Float64Array,
): void {
  for (let r = 0; r < regions; r += 2) {
    const s = r + 1 < regions ? r + 1 : r;
    const e0 = r * n;
    const e1 = s * n;
    let a0 = 0;
    let a1 = 0;
    let b0 = 0;
    let b1 = 0;
    for (let i = 0; i < n; i++) {
      const j = i * 2;
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[j];
      a0 += t * x;
      b0 += t * y;
      t = q[j + 1];
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

function products3(
  q: Float64Array,
  k0: number,
  n: number,
  p: number,
  e: Float64Array,
  regions: number,
  v: Float64Array,
): void {
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
      const j = i * 3;
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[j];
      a0 += t * x;
      b0 += t * y;
      t = q[j + 1];
      a1 += t * x;
      b1 += t * y;
      t = q[j + 2];
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

function products4(
  q: Float64Array,
  k0: number,
  n: number,
  p: number,
  e: Float64Array,
  regions: number,
  v: Float64Array,
): void {
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
      const j = i * 4;
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[j];
      a0 += t * x;
      b0 += t * y;
      t = q[j + 1];
      a1 += t * x;
      b1 += t * y;
      t = q[j + 2];
      a2 += t * x;
      b2 += t * y;
      t = q[j + 3];
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

function products5(
  q: Float64Array,
  k0: number,
  n: number,
  p: number,
  e: Float64Array,
  regions: number,
  v: Float64Array,
): void {
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
      const j = i * 5;
      const x = e[e0 + i];
      const y = e[e1 + i];
      let t = q[j];
      a0 += t * x;
      b0 += t * y;
      t = q[j + 1];
      a1 += t * x;
      b1 += t * y;
      t = q[j + 2];
      a2 += t * x;
      b2 += t * y;
      t = q[j + 3];
      a3 += t * x;
      b3 += t * y;
      t = q[j + 4];
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
  /** rearrangements evaluated here (with a range: the range's count) */
  rearrangements: number;
}

/**
 * A run of consecutive rearrangements of a test: indices first … first +
 * count − 1, where 0 is the identity and the rest follow the walk's order
 * (enumeration order, or the order of random draws).
 */
export interface RearrangementRange {
  first: number;
  count: number;
}

/** What every block of regions shares: the kind and size of the draw. Structured-cloneable. */
export interface RearrangementDraw {
  kind: RearrangementKind;
  /** participants the draw rearranges (all blocks' participants together) */
  n: number;
  /** "subsets" only: size of the first group */
  firstGroupSize: number;
  resamples: number;
}

/** Regions on one set of participants, ready for the rearrangement loop. Structured-cloneable. */
export interface RegionBlock {
  plan: LinearPermutationPlan;
  /**
   * Positions of the plan's n participants among the draw's participants
   * (increasing), or null when the block has all of them, in order.
   */
  members: Int32Array | null;
  /** regions × n, region-major: reduced-model residuals e */
  residuals: Float64Array;
  residualSquares: Float64Array;
  observed: Float64Array;
}

/** The draw of a single block that has every participant: the plan's own kind (label assignments for two groups). */
export function drawOfPlan(plan: LinearPermutationPlan): RearrangementDraw {
  return {
    kind: plan.kind,
    n: plan.n,
    firstGroupSize: plan.firstGroupSize,
    resamples: plan.resamples,
  };
}

/**
 * Rearrangements a test over `draw` evaluates, the identity included: all
 * M distinct ones when M ≤ resamples (exact), otherwise resamples + 1.
 * Cost O(n).
 */
export function rearrangementsOf(draw: RearrangementDraw): number {
  const m = countRearrangements(draw.kind, draw.n, draw.firstGroupSize);
  return m <= draw.resamples ? m : draw.resamples + 1;
}

/**
 * Rearrangements per block in the "blocks-v1" streams (the first block has
 * the identity besides). Part of the scheme: changing it changes results.
 */
export const REARRANGEMENT_BLOCK = 500;

/**
 * The rearrangement blocks of the "blocks-v1" streams for a test of `total`
 * rearrangements: block 0 is the identity and the next REARRANGEMENT_BLOCK,
 * every later block the next REARRANGEMENT_BLOCK (the last one what is
 * left). 10,000 resamples make 20 blocks. Cost O(blocks).
 */
export function rearrangementBlocks(total: number): RearrangementRange[] {
  const out: RearrangementRange[] = [];
  let first = 0;
  while (first < total) {
    const count = Math.min(total - first, REARRANGEMENT_BLOCK + (first === 0 ? 1 : 0));
    out.push({ first, count });
    first += count;
  }
  return out;
}

/**
 * One chunk of a blocked test: every rearrangement of rearrangement block
 * `block` (`rearrangementBlocks`) over the given regions, its random draws
 * from `createBlockRng(seed, block)` (enumerations need no generator: the
 * block is a stretch of the enumeration). The chunk depends only on the
 * draw, its regions, the seed and the block, so chunks may run anywhere
 * and in any order. Cost: the block's share of `countExtremeRearrangements`
 * plus 128·block state updates to find its stream. Throws StatsError as
 * `countExtremeRearrangements` and for a block past the last.
 */
export function countRearrangementChunk(input: {
  draw: RearrangementDraw;
  blocks: readonly RegionBlock[];
  seed: number;
  block: number;
  maxT: boolean;
  keepNull: boolean;
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}): RearrangementCounts {
  const ranges = rearrangementBlocks(rearrangementsOf(input.draw));
  const range = ranges[input.block];
  if (!(Number.isInteger(input.block) && range)) {
    throw new StatsError(
      `linearPermutationTest has ${ranges.length} rearrangement blocks (got block ${input.block})`,
    );
  }
  return countExtremeRearrangements({
    ...input,
    rng: createBlockRng(input.seed, input.block),
    range,
  });
}

/**
 * The regions from..to−1 (numbered block by block) as blocks: whole blocks,
 * or slices of a block's regions with the block's plan. Cost O(slice·n).
 */
export function sliceBlocks(
  blocks: readonly RegionBlock[],
  from: number,
  to: number,
): RegionBlock[] {
  const out: RegionBlock[] = [];
  let offset = 0;
  for (const b of blocks) {
    const count = b.residualSquares.length;
    const lo = Math.max(from, offset) - offset;
    const hi = Math.min(to, offset + count) - offset;
    if (lo < hi) {
      const n = b.plan.n;
      out.push({
        plan: b.plan,
        members: b.members,
        residuals: b.residuals.slice(lo * n, hi * n),
        residualSquares: b.residualSquares.slice(lo, hi),
        observed: b.observed.slice(lo, hi),
      });
    }
    offset += count;
  }
  return out;
}

/**
 * Regions per region chunk in the "blocks-v1" scheme: a blocked test's
 * chunks are regions [0, 100), [100, 200), … (numbered block by block) ×
 * rearrangement blocks. Fixed by the scheme, not by the number of threads
 * or workers, since how regions are grouped decides the kernel's path for
 * a one-region piece of a block (and so the last bits of its numbers).
 */
export const REGION_BLOCK = 100;

/** The region chunks [from, to) of a blocked test with `regions` regions. Cost O(chunks). */
export function regionChunks(regions: number): [number, number][] {
  const out: [number, number][] = [];
  for (let from = 0; from < regions; from += REGION_BLOCK)
    out.push([from, Math.min(regions, from + REGION_BLOCK)]);
  return out;
}

/** Per block, the state of the loop. */
interface BlockState {
  block: RegionBlock;
  regions: number;
  /** first region of the block in the combined numbering */
  offset: number;
  /** the block has every participant of the draw, in order */
  full: boolean;
  /** shared participant → position in the block, or −1 */
  local: Int32Array | null;
  work: KernelWorkspace;
  t: Float64Array;
  /** block position → block position of the residual it receives */
  from: Int32Array;
  /** block position → block position its basis row moves to (kernel order) */
  order: Int32Array;
  signs: Float64Array;
  /** one-region blocks: the rearranged residuals of a chunk of rearrangements, one after another */
  gathered: Float64Array;
  /** one-region blocks: Q′ẽ for each rearrangement of the chunk */
  products: Float64Array;
}

function checkBlocks(draw: RearrangementDraw, blocks: readonly RegionBlock[]): void {
  const name = "linearPermutationTest";
  if (blocks.length === 0) throw new StatsError(`${name} requires at least one region`);
  const shared = blocks.some((b) => b.members !== null && b.members.length !== draw.n);
  if (shared && draw.kind === "subsets") {
    throw new StatsError(
      `${name} requires sign vectors or orders of all participants when regions differ in participants`,
    );
  }
  for (const b of blocks) {
    const m = b.members === null ? draw.n : b.members.length;
    if (b.plan.n !== m)
      throw new StatsError(
        `${name} requires each block's participants to match its design (${m} for n = ${b.plan.n})`,
      );
    if (b.plan.kind !== draw.kind || b.plan.resamples !== draw.resamples)
      throw new StatsError(`${name} requires every block to share the draw`);
    if (draw.kind === "subsets" && b.plan.firstGroupSize !== draw.firstGroupSize)
      throw new StatsError(`${name} requires every block to share the draw`);
  }
}

/**
 * Runs every rearrangement of one draw over blocks of regions and counts,
 * per region, the rearranged statistics at least as extreme as the
 * observed one (two-sided, with the tie tolerance of `extremeThreshold`);
 * with `maxT`, the maximum |t*| over all regions of all blocks per
 * rearrangement.
 *
 * Cost per rearrangement: O(N) for the draw, and per block O(N) for its
 * share of the draw, O(m·p) to rearrange its basis and 2·m·p·R flops (one
 * region: O(N) to gather its residuals and 2·m·p flops). Memory: per
 * one-region block 32·m doubles for a chunk of draws; 32·N numbers for the
 * chunk's draws. The sequence of rearrangements
 * depends only on the draw and `rng`, so two calls on different blocks or
 * region slices with equally seeded generators walk the same
 * rearrangements.
 *
 * With `range`, only the rearrangements first … first + count − 1 of the
 * walk are evaluated (counts, maxima and nulls are of those alone, maxima
 * and nulls indexed from the range's start): an enumeration is stepped
 * forward to `first`; random draws do not depend on their index, so a
 * range that does not start at 0 skips only the identity and takes its
 * draws from `rng` from the start — the caller hands each range its own
 * stream (`createBlockRng`). Throws StatsError when the blocks do not fit
 * the draw or the range lies outside the test's rearrangements, and with
 * code "cancelled" when `shouldCancel()` returns true (checked after every
 * rearrangement, or after every 32 when one-region blocks are present).
 */
export function countExtremeRearrangements(input: {
  draw: RearrangementDraw;
  blocks: readonly RegionBlock[];
  rng: Rng;
  maxT: boolean;
  keepNull: boolean;
  range?: RearrangementRange;
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}): RearrangementCounts {
  const { draw, blocks, rng } = input;
  checkBlocks(draw, blocks);
  // Only blocks on some of the participants read the shared walk's inverse (σ); when every block
  // has all of them, the plain walk — the same draws — spares an O(n) scatter per rearrangement.
  const allFull = blocks.every((b) => b.members === null || b.members.length === draw.n);
  const walk =
    draw.kind === "subsets"
      ? createRearranger({
          kind: "subsets",
          n: draw.n,
          resamples: draw.resamples,
          rng,
          firstGroupSize: draw.firstGroupSize,
        })
      : allFull
        ? createRearranger({ kind: draw.kind, n: draw.n, resamples: draw.resamples, rng })
        : createSharedRearranger({ kind: draw.kind, n: draw.n, resamples: draw.resamples, rng });
  const sigma = "sigma" in walk ? walk.sigma : null;
  const first = input.range?.first ?? 0;
  const total = input.range?.count ?? walk.total;
  if (
    !(Number.isInteger(first) && Number.isInteger(total) && first >= 0 && total >= 1) ||
    first + total > walk.total
  ) {
    throw new StatsError(
      `linearPermutationTest requires a range within its ${walk.total} rearrangements (got ${first} + ${total})`,
    );
  }
  const skip = walk.exact ? first : Math.min(first, 1);
  for (let k = 0; k < skip; k++) walk.next();
  let regions = 0;
  const states: BlockState[] = blocks.map((block) => {
    const count = block.residualSquares.length;
    const m = block.plan.n;
    const full = block.members === null || block.members.length === draw.n;
    const state: BlockState = {
      block,
      regions: count,
      offset: regions,
      full,
      local: full ? null : memberPositions(draw.n, block.members as Int32Array),
      work: createWorkspace(block.plan, count),
      t: new Float64Array(count),
      from: new Int32Array(full ? 0 : m),
      order: new Int32Array(full ? 0 : m),
      signs: new Float64Array(full ? 0 : m),
      gathered: new Float64Array(!full && count === 1 ? CHUNK * m + 1 : 0),
      products: new Float64Array(!full && count === 1 ? CHUNK * block.plan.p : 0),
    };
    regions += count;
    return state;
  });
  const thresholds = new Float64Array(regions);
  for (const st of states)
    for (let r = 0; r < st.regions; r++)
      thresholds[st.offset + r] = extremeThreshold(st.block.observed[r]);
  const counts = new Float64Array(regions);
  const maxAbs = input.maxT ? new Float64Array(total) : null;
  const nulls = input.keepNull
    ? Array.from({ length: regions }, () => new Float32Array(total))
    : null;
  const tally: Tally = { thresholds, counts, maxAbs, nulls };
  // One-region blocks each have their own basis; they take the draws a chunk at a time so that
  // the basis stays in cache across the chunk (one pass over all bases per rearrangement is bound by memory).
  const singles = states.filter((st) => !st.full && st.regions === 1);
  const others = states.filter((st) => st.full || st.regions > 1);
  const n = draw.n;
  const drawn =
    singles.length === 0
      ? null
      : draw.kind === "signs"
        ? new Float64Array(CHUNK * n)
        : new Int32Array(CHUNK * n);
  const report = progressReporter(
    "linearPermutationTest",
    total,
    input.onProgress,
    input.shouldCancel,
  );
  for (let k0 = 0; k0 < total; k0 += CHUNK) {
    const size = Math.min(CHUNK, total - k0);
    for (let c = 0; c < size; c++) {
      const k = k0 + c;
      walk.next();
      if (drawn) drawn.set(draw.kind === "signs" ? walk.signs : (sigma as Int32Array), c * n);
      let max = 0;
      for (const st of others) {
        const { block, t } = st;
        if (st.full) {
          rearrangedRows(block.plan, walk.order, walk.signs, st.work.rows);
        } else {
          if (draw.kind === "signs") {
            regionSigns(walk.signs, block.members as Int32Array, st.signs);
          } else {
            regionSources(sigma as Int32Array, st.local as Int32Array, st.from);
            // Moving basis row from[j] to row j equals giving row j the residual of from[j].
            for (let j = 0; j < st.from.length; j++) st.order[st.from[j]] = j;
          }
          rearrangedRows(block.plan, st.order, st.signs, st.work.rows);
        }
        regionStatistics(
          block.plan,
          st.work,
          block.residuals,
          block.residualSquares,
          st.regions,
          t,
        );
        max = Math.max(max, tallyRegions(tally, st.offset, t, st.regions, k));
      }
      if (maxAbs) maxAbs[k] = max;
    }
    if (drawn) {
      for (const st of singles) {
        const { plan, residuals } = st.block;
        const m = plan.n;
        for (let c = 0; c < size; c++) {
          if (draw.kind === "signs")
            gatherBySigns(
              drawn as Float64Array,
              c * n,
              st.block.members as Int32Array,
              residuals,
              st.gathered,
              c * m,
            );
          else
            gatherBySigma(
              drawn as Int32Array,
              c * n,
              n,
              st.local as Int32Array,
              residuals,
              st.gathered,
              c * m,
            );
        }
        // The rearranged residual vectors of the chunk share the block's basis: the batched product takes them as it takes regions.
        blockedProducts(plan.basis, m, plan.p, st.gathered, size, st.products);
        for (let c = 0; c < size; c++) {
          st.t[0] = tStatistic(
            st.products,
            c * plan.p,
            plan.p,
            st.block.residualSquares[0],
            plan.df,
          );
          const a = tallyRegions(tally, st.offset, st.t, 1, k0 + c);
          if (maxAbs && a > maxAbs[k0 + c]) maxAbs[k0 + c] = a;
        }
      }
    }
    for (let c = 0; c < size; c++) report(k0 + c + 1);
  }
  return { counts, maxAbs, nulls, exact: walk.exact, rearrangements: total };
}

/** Rearrangements the one-region blocks take at a time (their draws: 32 × N numbers, in cache). */
const CHUNK = 32;

/** Per-region counts, per-rearrangement maxima and kept null statistics. */
interface Tally {
  thresholds: Float64Array;
  counts: Float64Array;
  maxAbs: Float64Array | null;
  nulls: Float32Array[] | null;
}

/** Records the statistics t[0..regions−1] of regions offset… at rearrangement k; returns their largest |t|. */
function tallyRegions(
  tally: Tally,
  offset: number,
  t: Float64Array,
  regions: number,
  k: number,
): number {
  let max = 0;
  for (let r = 0; r < regions; r++) {
    const a = Math.abs(t[r]);
    if (a >= tally.thresholds[offset + r]) tally.counts[offset + r]++;
    if (a > max) max = a;
    if (tally.nulls) tally.nulls[offset + r][k] = t[r];
  }
  return max;
}

/** ẽ_j = s_{members[j]}·e_j into out[o + j]: the block's residuals under the shared signs (signs[at + i] for participant i). Cost O(m). */
function gatherBySigns(
  signs: Float64Array,
  at: number,
  members: Int32Array,
  e: Float64Array,
  out: Float64Array,
  o: number,
): void {
  for (let j = 0; j < members.length; j++) out[o + j] = signs[at + members[j]] * e[j];
}

/**
 * The rule and the gather at once: the j-th of σ's entries that belong to
 * the block gives its residual to the block's j-th participant, written to
 * out[o + j] (σ = sigma[at … at + N − 1]; out[o + m] may be overwritten).
 * Cost O(N).
 */
function gatherBySigma(
  sigma: Int32Array,
  at: number,
  n: number,
  local: Int32Array,
  e: Float64Array,
  out: Float64Array,
  o: number,
): void {
  let j = o;
  for (let u = at; u < at + n; u++) {
    const from = local[sigma[u]];
    // Branch-free: write, then advance only for the block's own participants (out has one spare slot at the end).
    out[j] = e[from < 0 ? 0 : from];
    j += from >= 0 ? 1 : 0;
  }
}

/**
 * t of the tested coefficient from v = Q′ẽ (at v[o … o + p − 1]) and e′e:
 * RSS* = e′e − ‖v‖², t* = v_p / √(RSS* ÷ df); an exact fit (RSS* ≤ 1e-12·e′e)
 * gives ±Infinity. Cost O(p).
 */
function tStatistic(v: Float64Array, o: number, p: number, ee: number, df: number): number {
  let ss = 0;
  for (let k = 0; k < p; k++) ss += v[o + k] * v[o + k];
  const rss = ee - ss;
  const last = v[o + p - 1];
  return rss > EXACT_FIT * ee ? last / Math.sqrt(rss / df) : last < 0 ? -Infinity : Infinity;
}
