/**
 * Noncentral t distribution function by numerical integration of its
 * definition T = (Z + δ)/S, S = √(V/ν), V ~ χ²_ν:
 * P(T ≤ t) = ∫₀^∞ Φ(t·s − δ) f_S(s) ds with
 * f_S(s) = 2(ν/2)^{ν/2} s^{ν−1} e^{−νs²/2} / Γ(ν/2), by Simpson's rule.
 * Independent of the series the engine uses; for integer ν only.
 */
import { normalCdf } from "../../../server/stats/distributions";

function logGammaHalf(nu: number): number {
  // Γ(ν/2) for integer ν: recursion from Γ(1) = 1 or Γ(1/2) = √π
  let g = nu % 2 === 0 ? 0 : 0.5 * Math.log(Math.PI);
  for (let k = nu % 2 === 0 ? 1 : 0.5; k < nu / 2; k += 1) g += Math.log(k);
  return g;
}

export function noncentralTByQuadrature(t: number, nu: number, delta: number): number {
  const lg = logGammaHalf(nu);
  const density = (s: number) =>
    s <= 0
      ? 0
      : Math.exp(
          Math.log(2) +
            (nu / 2) * Math.log(nu / 2) +
            (nu - 1) * Math.log(s) -
            (nu * s * s) / 2 -
            lg,
        );
  const steps = 4000;
  const upper = 1 + 12 / Math.sqrt(nu);
  const h = upper / steps;
  let sum = 0;
  for (let k = 0; k <= steps; k++) {
    const s = k * h;
    const w = k === 0 || k === steps ? 1 : k % 2 === 1 ? 4 : 2;
    sum += w * normalCdf(t * s - delta) * density(s);
  }
  return (sum * h) / 3;
}
