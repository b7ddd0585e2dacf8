/**
 * Published data sets used by the reference tests. Each is reproduced from
 * its printed source; none is invented.
 */

/** Student's sleep data: extra hours of sleep under two drugs, 10 patients (Cushny & Peebles 1905, as analysed by Student 1908; R dataset `sleep`). */
export const sleepGroup1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0];
export const sleepGroup2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4];

/** Speed (mph) and stopping distance (ft) of 50 cars (Ezekiel 1930; R dataset `cars`). */
export const carsSpeed = [
  4, 4, 7, 7, 8, 9, 10, 10, 10, 11, 11, 12, 12, 12, 12, 13, 13, 13, 13, 14, 14, 14, 14, 15, 15, 15,
  16, 16, 17, 17, 17, 18, 18, 18, 18, 19, 19, 19, 20, 20, 20, 20, 20, 22, 23, 24, 24, 24, 24, 25,
];
export const carsDist = [
  2, 10, 4, 22, 16, 10, 18, 26, 34, 17, 28, 14, 20, 24, 28, 26, 34, 34, 46, 26, 36, 60, 80, 20, 26,
  54, 32, 40, 32, 40, 50, 42, 56, 76, 84, 36, 46, 68, 32, 48, 52, 56, 64, 66, 54, 70, 92, 93, 120,
  85,
];

/** Anscombe's quartet, sets I and IV (Anscombe 1973, Am. Stat. 27:17–21, Table 1). */
export const anscombeX1 = [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5];
export const anscombeY1 = [8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68];
export const anscombeX4 = [8, 8, 8, 8, 8, 8, 8, 19, 8, 8, 8];
export const anscombeY4 = [6.58, 5.76, 7.71, 8.84, 8.47, 7.04, 5.25, 12.5, 5.56, 7.91, 6.89];

/** Brownlee's stack loss data, 21 days: air flow, water temperature, acid concentration, stack loss (Brownlee 1965; R dataset `stackloss`). */
export const stackloss: readonly (readonly [number, number, number, number])[] = [
  [80, 27, 89, 42],
  [80, 27, 88, 37],
  [75, 25, 90, 37],
  [62, 24, 87, 28],
  [62, 22, 87, 18],
  [62, 23, 87, 18],
  [62, 24, 93, 19],
  [62, 24, 93, 20],
  [58, 23, 87, 15],
  [58, 18, 80, 14],
  [58, 18, 89, 14],
  [58, 17, 88, 13],
  [58, 18, 82, 11],
  [58, 19, 93, 12],
  [50, 18, 89, 8],
  [50, 18, 86, 7],
  [50, 19, 72, 8],
  [50, 19, 79, 8],
  [50, 20, 80, 9],
  [56, 20, 82, 15],
  [70, 20, 91, 15],
];

/** Hamilton depression scale before (x) and after (y) treatment, 9 patients (Hollander & Wolfe 1973, p. 29; R `wilcox.test` documentation example). */
export const depressionX = [1.83, 0.5, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.3];
export const depressionY = [0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29];

/** Permeability constants of the chorioamnion at term (x) and 12–26 weeks (y) (Hollander & Wolfe 1973, p. 69; R `wilcox.test` documentation example). */
export const permeabilityTerm = [0.8, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46];
export const permeabilityEarly = [1.15, 0.88, 0.9, 0.74, 1.21];

/** Row-major design with an intercept column from column vectors. */
export function withIntercept(...columns: readonly (readonly number[])[]): {
  x: Float64Array;
  n: number;
  p: number;
} {
  const n = columns[0].length;
  const p = columns.length + 1;
  const x = new Float64Array(n * p);
  for (let i = 0; i < n; i++) {
    x[i * p] = 1;
    columns.forEach((c, j) => {
      x[i * p + j + 1] = c[i];
    });
  }
  return { x, n, p };
}

/** All k-subsets of {0, …, n−1} (for exact enumeration in tests). */
export function* subsets(n: number, k: number): Generator<number[]> {
  const idx = Array.from({ length: k }, (_, i) => i);
  while (true) {
    yield idx.slice();
    let i = k - 1;
    while (i >= 0 && idx[i] === n - k + i) i--;
    if (i < 0) return;
    idx[i]++;
    for (let j = i + 1; j < k; j++) idx[j] = idx[j - 1] + 1;
  }
}

/** All permutations of 0…n−1 (Heap's algorithm), yielding the same array each time. */
export function* permutations(n: number): Generator<Int32Array> {
  const a = Int32Array.from({ length: n }, (_, i) => i);
  const c = new Int32Array(n);
  yield a;
  let i = 0;
  while (i < n) {
    if (c[i] < i) {
      const j = i % 2 === 0 ? 0 : c[i];
      const t = a[j];
      a[j] = a[i];
      a[i] = t;
      yield a;
      c[i]++;
      i = 0;
    } else {
      c[i] = 0;
      i++;
    }
  }
}

/**
 * BCG vaccine trials (Colditz et al. 1994, JAMA 271:698–702): 2×2 counts
 * [vaccinated TB+, vaccinated TB−, control TB+, control TB−, absolute latitude],
 * as listed in the data set documented by Viechtbauer (2010, J Stat Softw 36(3)).
 */
export const BCG: readonly (readonly [number, number, number, number, number])[] = [
  [4, 119, 11, 128, 44],
  [6, 300, 29, 274, 55],
  [3, 228, 11, 209, 42],
  [62, 13536, 248, 12619, 52],
  [33, 5036, 47, 5761, 13],
  [180, 1361, 372, 1079, 44],
  [8, 2537, 10, 619, 19],
  [505, 87886, 499, 87892, 13],
  [29, 7470, 45, 7232, 27],
  [17, 1699, 65, 1600, 42],
  [186, 50448, 141, 27197, 18],
  [5, 2493, 3, 2338, 33],
  [27, 16886, 29, 17825, 33],
];

/** Shrout & Fleiss (1979, Psychological Bulletin 86:420–428), Table 2: 6 targets rated by 4 judges. */
export const SHROUT_FLEISS: readonly (readonly number[])[] = [
  [9, 2, 5, 8],
  [6, 1, 3, 2],
  [8, 4, 6, 8],
  [7, 1, 2, 6],
  [10, 5, 6, 9],
  [6, 2, 4, 7],
];
