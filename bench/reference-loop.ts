/**
 * A plain register-blocked reference loop of the permutation kernel's
 * multiply–adds — two regions × five regressors per pass over the
 * participants, every accumulator in a register — so a kernel suite can
 * print, from the same run on the same machine, what share of this loop's
 * speed the kernel reaches (machines differ; the share travels).
 */
import { createRng } from "../server/stats/rng";

/** Plain register-blocked loop of the kernel's multiply–adds: two regions × five columns per pass. */
export function referenceLoop(
  q: Float64Array,
  e: Float64Array,
  n: number,
  regions: number,
): number {
  let sink = 0;
  for (let r = 0; r + 1 < regions; r += 2) {
    const a = r * n;
    const b = a + n;
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
    for (let j = 0; j < n; j++) {
      const u = j * 5;
      const x = e[a + j];
      const y = e[b + j];
      const q0 = q[u];
      const q1 = q[u + 1];
      const q2 = q[u + 2];
      const q3 = q[u + 3];
      const q4 = q[u + 4];
      a0 += q0 * x;
      a1 += q1 * x;
      a2 += q2 * x;
      a3 += q3 * x;
      a4 += q4 * x;
      b0 += q0 * y;
      b1 += q1 * y;
      b2 += q2 * y;
      b3 += q3 * y;
      b4 += q4 * y;
    }
    sink += a0 + a1 + a2 + a3 + a4 + b0 + b1 + b2 + b3 + b4;
  }
  return sink;
}

/**
 * GFLOP/s of `referenceLoop` on n participants × `regions` regions, one
 * thread, timed over enough passes to take about a second (after one
 * untimed pass).
 */
export function referenceGflops(n: number, regions: number): number {
  const rng = createRng(99);
  const q = Float64Array.from({ length: n * 5 }, () => rng.next());
  const e = Float64Array.from({ length: n * regions }, () => rng.next());
  let sink = referenceLoop(q, e, n, regions);
  const flops = 2 * n * 5 * regions;
  const reps = Math.max(3, Math.ceil(2e9 / flops));
  const start = performance.now();
  for (let k = 0; k < reps; k++) sink += referenceLoop(q, e, n, regions);
  const seconds = (performance.now() - start) / 1000;
  if (!Number.isFinite(sink)) throw new Error("reference loop: non-finite checksum");
  return (flops * reps) / 1e9 / seconds;
}
