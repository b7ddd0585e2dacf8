/**
 * Gauss–Legendre quadrature: nodes and weights on [−1, 1] by Newton's method
 * on the Legendre polynomial P_m (Press et al. 2007, Numerical Recipes 3rd
 * ed., §4.6.1, routine gauleg), and a 16-point rule on one panel.
 */
function gaussLegendre(m: number): { nodes: Float64Array; weights: Float64Array } {
  const nodes = new Float64Array(m);
  const weights = new Float64Array(m);
  for (let i = 0; i < Math.ceil(m / 2); i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (m + 0.5));
    let derivative = 0;
    for (let iter = 0; iter < 100; iter++) {
      let p1 = 1;
      let p2 = 0;
      for (let j = 1; j <= m; j++) {
        const p3 = p2;
        p2 = p1;
        p1 = ((2 * j - 1) * z * p2 - (j - 1) * p3) / j;
      }
      derivative = (m * (z * p1 - p2)) / (z * z - 1);
      const previous = z;
      z = previous - p1 / derivative;
      if (Math.abs(z - previous) < 1e-15) break;
    }
    nodes[i] = -z;
    nodes[m - 1 - i] = z;
    const w = 2 / ((1 - z * z) * derivative * derivative);
    weights[i] = w;
    weights[m - 1 - i] = w;
  }
  return { nodes, weights };
}

const GL16 = gaussLegendre(16);

/** ∫_a^b f by the 16-point Gauss–Legendre rule (exact for polynomials of degree 31). */
export function gaussLegendre16(f: (s: number) => number, a: number, b: number): number {
  const half = 0.5 * (b - a);
  const mid = a + half;
  let sum = 0;
  for (let i = 0; i < 16; i++) sum += GL16.weights[i] * f(mid + half * GL16.nodes[i]);
  return half * sum;
}
