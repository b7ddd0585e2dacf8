/**
 * Adjusted p-values for testing many regions at once.
 *
 * - Bonferroni: min(1, m·p_i).
 * - Holm (1979) step-down: with p_(1) ≤ … ≤ p_(m),
 *   p̃_(i) = max_{j ≤ i} min(1, (m − j + 1)·p_(j)).
 * - Benjamini & Hochberg (1995) step-up false discovery rate:
 *   p̃_(i) = min_{j ≥ i} min(1, m·p_(j)/j).
 *
 * These are the adjusted p-values in the sense of Wright (1992, Biometrics
 * 48:1005–1013): reject at level α exactly when p̃ ≤ α. Cost O(m log m).
 * Ties are ordered by position so the result never depends on sort
 * stability. Throws StatsError for an empty list or a p outside [0, 1].
 */
import { StatsError } from "./errors";

export type CorrectionMethod = "none" | "bonferroni" | "holm" | "bh";

function checked(p: readonly number[], name: string): void {
  if (p.length === 0) throw new StatsError(`${name} requires at least one p-value`);
  p.forEach((v, i) => {
    if (!(v >= 0 && v <= 1))
      throw new StatsError(`${name} requires p-values between 0 and 1 (entry ${i + 1} is ${v})`);
  });
}

function ascendingOrder(p: readonly number[]): number[] {
  return p.map((_, i) => i).sort((a, b) => p[a] - p[b] || a - b);
}

/** Bonferroni adjustment. */
export function bonferroni(p: readonly number[]): number[] {
  checked(p, "bonferroni");
  return p.map((v) => Math.min(1, v * p.length));
}

/** Holm's step-down adjustment. */
export function holm(p: readonly number[]): number[] {
  checked(p, "holm");
  const m = p.length;
  const order = ascendingOrder(p);
  const out = new Array<number>(m);
  let running = 0;
  order.forEach((idx, i) => {
    running = Math.max(running, Math.min(1, (m - i) * p[idx]));
    out[idx] = running;
  });
  return out;
}

/** Benjamini–Hochberg step-up adjustment (false discovery rate). */
export function benjaminiHochberg(p: readonly number[]): number[] {
  checked(p, "benjaminiHochberg");
  const m = p.length;
  const order = ascendingOrder(p);
  const out = new Array<number>(m);
  let running = 1;
  for (let i = m - 1; i >= 0; i--) {
    const idx = order[i];
    running = Math.min(running, Math.min(1, (m * p[idx]) / (i + 1)));
    out[idx] = running;
  }
  return out;
}

/** Dispatch by method name; "none" returns a copy. */
export function adjustPValues(p: readonly number[], method: CorrectionMethod): number[] {
  switch (method) {
    case "none":
      checked(p, "adjustPValues");
      return p.slice();
    case "bonferroni":
      return bonferroni(p);
    case "holm":
      return holm(p);
    case "bh":
      return benjaminiHochberg(p);
    default:
      throw new StatsError(`adjustPValues: unknown correction '${String(method)}'`);
  }
}
