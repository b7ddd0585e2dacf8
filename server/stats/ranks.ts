/**
 * Mid-ranks (average ranks for ties) and the sizes of tie groups, the common
 * first step of the rank tests (Hollander & Wolfe 1999, §1.2; Conover 1999,
 * §5.1). Cost O(n log n). Inputs must be finite (callers check).
 */
export interface RankResult {
  /** 1-based mid-ranks, in input order. */
  ranks: Float64Array;
  /** Sizes t of every tie group with t ≥ 2 (ascending value order). */
  ties: number[];
}

export function averageRanks(x: ArrayLike<number>): RankResult {
  const n = x.length;
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  order.sort((a, b) => x[a] - x[b] || a - b);
  const ranks = new Float64Array(n);
  const ties: number[] = [];
  let i = 0;
  while (i < n) {
    let j = i + 1;
    while (j < n && x[order[j]] === x[order[i]]) j++;
    const r = (i + 1 + j) / 2; // mean of ranks i+1 … j
    for (let k = i; k < j; k++) ranks[order[k]] = r;
    if (j - i > 1) ties.push(j - i);
    i = j;
  }
  return { ranks, ties };
}
