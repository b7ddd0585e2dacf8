/**
 * Worker-thread task of region reads (region-read-jobs.ts): a finished
 * region's stored texts decoded into columns, or one order of its
 * participants sorted (region-points.ts). Computes only; the caller reads
 * the texts from the database. Runs at normal priority, unlike the fit
 * threads: a reader is waiting for it.
 */
import {
  decodeRegionPoints,
  type OrderKeys,
  orderPositions,
  type RegionColumns,
} from "./region-points";

export type RegionReadTask =
  | { kind: "decode"; participants: string | null; plot: string | null }
  | { kind: "order"; keys: OrderKeys; direction: "asc" | "desc" };

export default function runRegionReadTask(task: RegionReadTask): RegionColumns | Uint32Array {
  return task.kind === "decode"
    ? decodeRegionPoints(task.participants, task.plot)
    : orderPositions(task.keys, task.direction);
}
