/**
 * Worker-thread task of region reads (region-read-jobs.ts): a finished
 * region's stored texts decoded into columns, with its plot points written
 * out as the region detail sends them, or one order of its participants
 * sorted (region-points.ts). Computes only; the caller reads
 * the texts from the database. Runs at normal priority, unlike the fit
 * threads: a reader is waiting for it.
 */
import {
  decodeRegionPoints,
  type OrderKeys,
  orderPositions,
  type RegionColumns,
  RegionPoints,
} from "./region-points";

export type RegionReadTask =
  | { kind: "decode"; participants: string | null; plot: string | null }
  | { kind: "order"; keys: OrderKeys; direction: "asc" | "desc" };

export default function runRegionReadTask(task: RegionReadTask): RegionColumns | Uint32Array {
  if (task.kind === "order") return orderPositions(task.keys, task.direction);
  // A region large enough to be decoded here has its plot points written out here too.
  const columns = decodeRegionPoints(task.participants, task.plot);
  columns.pointsText = new RegionPoints(columns).plotPointsText();
  return columns;
}
