/**
 * Two-sample t tests for the difference mean(first) − mean(second):
 * Student's pooled-variance test and Welch's unequal-variance test with the
 * Welch–Satterthwaite degrees of freedom (Welch 1947; Satterthwaite 1946;
 * Zar 2010, §8.1).
 */
import { mean, sampleVariance } from "./descriptive";
import { studentTQuantile, studentTTwoSidedP } from "./distributions";
import { require } from "./errors";

export interface TwoSampleTResult {
  n1: number;
  n2: number;
  mean1: number;
  mean2: number;
  /** mean(first) − mean(second) */
  estimate: number;
  se: number;
  t: number;
  df: number;
  p: number;
  ciLow: number;
  ciHigh: number;
}

function check(name: string, x1: ArrayLike<number>, x2: ArrayLike<number>, level: number): void {
  require(x1.length >= 2 && x2.length >= 2, `${name} requires at least two values per group`);
  for (let i = 0; i < x1.length; i++)
    require(Number.isFinite(x1[i]), `${name} requires finite values`);
  for (let i = 0; i < x2.length; i++)
    require(Number.isFinite(x2[i]), `${name} requires finite values`);
  require(level > 0 && level < 1, `${name} requires 0 < level < 1`);
}

function finish(
  n1: number,
  n2: number,
  m1: number,
  m2: number,
  se: number,
  df: number,
  level: number,
): TwoSampleTResult {
  const estimate = m1 - m2;
  const t = estimate / se;
  const q = studentTQuantile(0.5 + level / 2, df);
  return {
    n1,
    n2,
    mean1: m1,
    mean2: m2,
    estimate,
    se,
    t,
    df,
    p: studentTTwoSidedP(t, df),
    ciLow: estimate - q * se,
    ciHigh: estimate + q * se,
  };
}

/**
 * Student's two-sample t test with pooled variance
 * s_p² = ((n1−1)s1² + (n2−1)s2²)/(n1+n2−2), se = s_p √(1/n1 + 1/n2),
 * df = n1 + n2 − 2. Cost O(n1 + n2).
 * Throws StatsError for fewer than two values per group, non-finite values or
 * zero pooled variance.
 */
export function studentTTest(
  x1: ArrayLike<number>,
  x2: ArrayLike<number>,
  options: { level?: number } = {},
): TwoSampleTResult {
  const { level = 0.95 } = options;
  check("studentTTest", x1, x2, level);
  const n1 = x1.length;
  const n2 = x2.length;
  const v = ((n1 - 1) * sampleVariance(x1) + (n2 - 1) * sampleVariance(x2)) / (n1 + n2 - 2);
  require(v > 0, "studentTTest requires values that are not all equal");
  return finish(n1, n2, mean(x1), mean(x2), Math.sqrt(v * (1 / n1 + 1 / n2)), n1 + n2 - 2, level);
}

/**
 * Welch's t test: se = √(s1²/n1 + s2²/n2), Welch–Satterthwaite
 * df = (s1²/n1 + s2²/n2)² / ((s1²/n1)²/(n1−1) + (s2²/n2)²/(n2−1)).
 * Cost O(n1 + n2). Throws StatsError for fewer than two values per group,
 * non-finite values, or both groups constant.
 */
export function welchTTest(
  x1: ArrayLike<number>,
  x2: ArrayLike<number>,
  options: { level?: number } = {},
): TwoSampleTResult {
  const { level = 0.95 } = options;
  check("welchTTest", x1, x2, level);
  const n1 = x1.length;
  const n2 = x2.length;
  const a = sampleVariance(x1) / n1;
  const b = sampleVariance(x2) / n2;
  require(a + b > 0, "welchTTest requires values that are not all equal");
  const df = ((a + b) * (a + b)) / ((a * a) / (n1 - 1) + (b * b) / (n2 - 1));
  return finish(n1, n2, mean(x1), mean(x2), Math.sqrt(a + b), df, level);
}
