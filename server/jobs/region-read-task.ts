/**
 * Worker-thread task of region reads (region-read-jobs.ts): a finished
 * region's stored texts decoded into columns (region-points.ts).
 * Computes only; the caller reads the texts from the database. Runs at
 * normal priority, unlike the fit threads: a reader is waiting for it.
 */
import { decodeRegionPoints, type RegionColumns } from "./region-points";

export interface RegionReadTask {
  participants: string | null;
  plot: string | null;
}

export default function runRegionReadTask(task: RegionReadTask): RegionColumns {
  return decodeRegionPoints(task.participants, task.plot);
}
