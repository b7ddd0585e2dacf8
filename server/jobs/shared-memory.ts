/**
 * Typed arrays in memory the threads share. A typed array over a
 * SharedArrayBuffer posted to a worker thread is shared, not copied: at
 * 20,000 participants × 400 regions, a fit's values (64 MB) and a region
 * chunk's residuals (16 MB) were copied by structured clone on the posting
 * thread and again on the receiving one, for every task. Only for arrays
 * nothing writes once made (a fit's data, a plan's setup).
 */

/** `a` copied into shared memory (`a` itself when it is there already). Cost O(its length). */
export function sharedCopy<T extends Float64Array | Int32Array>(a: T): T {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const Typed = a.constructor as new (buffer: SharedArrayBuffer) => T;
  const copy = new Typed(new SharedArrayBuffer(a.byteLength));
  copy.set(a);
  return copy;
}
