/**
 * Reliability of a region's contrast value across repeated sessions:
 * intraclass correlations from a participants × sessions matrix.
 */
import { StatsError } from "./errors";
import { fQuantile, fUpper } from "./distributions";

export interface IntraclassCorrelation {
  value: number;
  ciLow: number;
  ciHigh: number;
  /** F statistic of the test that the population ICC is 0. */
  f: number;
  df1: number;
  df2: number;
  /** One-sided p-value of that F test (upper tail). */
  p: number;
}

export interface IntraclassCorrelationsResult {
  /** Participants (targets). */
  n: number;
  /** Sessions (judges / occasions), k. */
  sessions: number;
  /** One-way random effects, single session. */
  icc11: IntraclassCorrelation;
  /** Two-way random effects, absolute agreement, single session. */
  icc21: IntraclassCorrelation;
  /** Two-way mixed effects, consistency, single session. */
  icc31: IntraclassCorrelation;
  /** One-way random effects, mean of k sessions. */
  icc1k: IntraclassCorrelation;
  /** Two-way random effects, absolute agreement, mean of k sessions. */
  icc2k: IntraclassCorrelation;
  /** Two-way mixed effects, consistency, mean of k sessions. */
  icc3k: IntraclassCorrelation;
  /** The ANOVA mean squares the coefficients are built from. */
  meanSquares: { between: number; within: number; sessions: number; error: number };
}

/**
 * Spearman–Brown step-up of a single-session value to the mean of k sessions.
 * Increasing on (−1/(k−1), 1]; at or below −1/(k−1) the k-session value is
 * unbounded below, reported as −Infinity.
 */
function stepUp(r: number, k: number): number {
  const denominator = 1 + (k - 1) * r;
  return denominator > 0 ? (k * r) / denominator : Number.NEGATIVE_INFINITY;
}

/**
 * Intraclass correlations ICC(1,1), ICC(2,1), ICC(3,1) and their k-session
 * forms ICC(1,k), ICC(2,k), ICC(3,k), after Shrout & Fleiss (1979,
 * Psychological Bulletin 86:420–428), from the two-way ANOVA without
 * replication of an n participants × k sessions matrix:
 *
 *   BMS between-participants, WMS within-participants, JMS between-sessions,
 *   EMS residual mean square.
 *   ICC(1,1) = (BMS − WMS) / (BMS + (k−1)WMS)        ICC(1,k) = (BMS − WMS) / BMS
 *   ICC(2,1) = (BMS − EMS) / (BMS + (k−1)EMS + k(JMS − EMS)/n)
 *   ICC(2,k) = (BMS − EMS) / (BMS + (JMS − EMS)/n)
 *   ICC(3,1) = (BMS − EMS) / (BMS + (k−1)EMS)        ICC(3,k) = (BMS − EMS) / BMS
 *
 * F tests (H0: ICC = 0): F = BMS/WMS on (n−1, n(k−1)) for the one-way forms,
 * F = BMS/EMS on (n−1, (n−1)(k−1)) for the two-way forms (Shrout & Fleiss
 * 1979; McGraw & Wong 1996, Psychological Methods 1:30–46, Table 8 with
 * ρ0 = 0). The same F test serves the single and k-session forms.
 *
 * Confidence intervals at `level` (default 0.95):
 * - ICC(1,1), ICC(3,1): Shrout & Fleiss (1979) exact F intervals,
 *   F_L = F0 / F_{1−α/2}(df1, df2), F_U = F0 · F_{1−α/2}(df2, df1),
 *   bounds (F_L − 1)/(F_L + k − 1) and (F_U − 1)/(F_U + k − 1).
 * - ICC(1,k), ICC(3,k): 1 − 1/F_L and 1 − 1/F_U (Shrout & Fleiss 1979;
 *   McGraw & Wong 1996, Table 7).
 * - ICC(2,1): Shrout & Fleiss (1979) approximate interval with
 *   Satterthwaite degrees of freedom ν for the denominator.
 * - ICC(2,k): the ICC(2,1) bounds stepped up by Spearman–Brown, which equals
 *   the closed form of McGraw & Wong (1996, Table 7, ICC(A,k)). The value is
 *   the step-up of ICC(2,1), algebraically the formula above.
 *
 * The k-session forms range over (−∞, 1]: where a one-session value or bound
 * is at or below −1/(k−1) (possible only when sessions disagree more than
 * participants differ), the k-session value or lower bound is −Infinity.
 *
 * Cost O(n k) plus a few F quantiles.
 *
 * Preconditions: at least 2 participants and 2 sessions, a complete
 * rectangular matrix of finite numbers, 0 < level < 1, and some residual
 * variation (WMS > 0 and EMS > 0). Throws StatsError naming the row and
 * column of a missing value otherwise.
 */
export function intraclassCorrelations(
  matrix: ArrayLike<ArrayLike<number>>,
  options: { level?: number } = {},
): IntraclassCorrelationsResult {
  const level = options.level ?? 0.95;
  if (!(level > 0 && level < 1))
    throw new StatsError(
      `intraclassCorrelations requires a confidence level between 0 and 1 (got ${level})`,
    );
  const n = matrix.length;
  if (n < 2)
    throw new StatsError(`intraclassCorrelations requires at least two participants (got ${n})`);
  const k = matrix[0].length;
  if (k < 2)
    throw new StatsError(`intraclassCorrelations requires at least two sessions (got ${k})`);
  const rowMeans = new Float64Array(n);
  const colSums = new Float64Array(k);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const row = matrix[i];
    if (row.length !== k)
      throw new StatsError(
        `intraclassCorrelations requires ${k} sessions in every row (row ${i + 1} has ${row.length})`,
      );
    let s = 0;
    for (let j = 0; j < k; j++) {
      const value = row[j];
      if (typeof value !== "number" || !Number.isFinite(value)) {
        throw new StatsError(
          `intraclassCorrelations requires a complete matrix (row ${i + 1}, session ${j + 1} has ${String(value)})`,
        );
      }
      s += value;
      colSums[j] += value;
    }
    rowMeans[i] = s / k;
    total += s;
  }
  const grand = total / (n * k);
  let ssTotal = 0;
  for (let i = 0; i < n; i++) {
    const row = matrix[i];
    for (let j = 0; j < k; j++) ssTotal += (row[j] - grand) ** 2;
  }
  let ssRows = 0;
  for (let i = 0; i < n; i++) ssRows += (rowMeans[i] - grand) ** 2;
  ssRows *= k;
  let ssCols = 0;
  for (let j = 0; j < k; j++) ssCols += (colSums[j] / n - grand) ** 2;
  ssCols *= n;
  const ssWithin = Math.max(0, ssTotal - ssRows);
  const ssError = Math.max(0, ssTotal - ssRows - ssCols);
  const bms = ssRows / (n - 1);
  const wms = ssWithin / (n * (k - 1));
  const jms = ssCols / (k - 1);
  const ems = ssError / ((n - 1) * (k - 1));
  const scale = Math.max(ssTotal, 1e-300);
  if (!(ssWithin > 1e-13 * scale) || !(ems > 1e-13 * (scale / ((n - 1) * (k - 1))))) {
    throw new StatsError(
      "intraclassCorrelations requires variation between sessions within participants (the residual mean square is 0)",
    );
  }

  const alpha = 1 - level;
  const upperP = 1 - alpha / 2;

  // One-way: F = BMS / WMS.
  const df1 = n - 1;
  const dfW = n * (k - 1);
  const fOne = bms / wms;
  const pOne = fUpper(fOne, df1, dfW);
  const fLowOne = fOne / fQuantile(upperP, df1, dfW);
  const fHighOne = fOne * fQuantile(upperP, dfW, df1);

  // Two-way: F = BMS / EMS.
  const dfE = (n - 1) * (k - 1);
  const fTwo = bms / ems;
  const pTwo = fUpper(fTwo, df1, dfE);
  const fLowThree = fTwo / fQuantile(upperP, df1, dfE);
  const fHighThree = fTwo * fQuantile(upperP, dfE, df1);

  const icc11 = (bms - wms) / (bms + (k - 1) * wms);
  const icc1k = (bms - wms) / bms;
  const icc21 = (bms - ems) / (bms + (k - 1) * ems + (k * (jms - ems)) / n);
  const icc2k = stepUp(icc21, k);
  const icc31 = (bms - ems) / (bms + (k - 1) * ems);
  const icc3k = (bms - ems) / bms;

  // ICC(2,1) interval: Satterthwaite degrees of freedom (Shrout & Fleiss 1979).
  const fj = jms / ems;
  const c = n * (1 + (k - 1) * icc21) - k * icc21;
  const nu =
    ((k - 1) * (n - 1) * (k * icc21 * fj + c) ** 2) / ((n - 1) * (k * icc21 * fj) ** 2 + c * c);
  const fStar = fQuantile(upperP, df1, nu);
  const fStar2 = fQuantile(upperP, nu, df1);
  const low21 = (n * (bms - fStar * ems)) / (fStar * (k * jms + (k * n - k - n) * ems) + n * bms);
  const high21 = (n * (fStar2 * bms - ems)) / (k * jms + (k * n - k - n) * ems + n * fStar2 * bms);

  const oneWay = { f: fOne, df1, df2: dfW, p: pOne };
  const twoWay = { f: fTwo, df1, df2: dfE, p: pTwo };
  return {
    n,
    sessions: k,
    icc11: {
      value: icc11,
      ciLow: (fLowOne - 1) / (fLowOne + k - 1),
      ciHigh: (fHighOne - 1) / (fHighOne + k - 1),
      ...oneWay,
    },
    icc21: { value: icc21, ciLow: low21, ciHigh: high21, ...twoWay },
    icc31: {
      value: icc31,
      ciLow: (fLowThree - 1) / (fLowThree + k - 1),
      ciHigh: (fHighThree - 1) / (fHighThree + k - 1),
      ...twoWay,
    },
    icc1k: { value: icc1k, ciLow: 1 - 1 / fLowOne, ciHigh: 1 - 1 / fHighOne, ...oneWay },
    icc2k: { value: icc2k, ciLow: stepUp(low21, k), ciHigh: stepUp(high21, k), ...twoWay },
    icc3k: { value: icc3k, ciLow: 1 - 1 / fLowThree, ciHigh: 1 - 1 / fHighThree, ...twoWay },
    meanSquares: { between: bms, within: wms, sessions: jms, error: ems },
  };
}
