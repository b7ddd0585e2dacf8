/**
 * A finished fit's per-participant diagnostics for one region, a page at a
 * time (GET /api/fits/:fitId/regions/:region/participants): the region
 * detail carries what its plots draw, this carries every diagnostic of
 * every participant, so neither the fit view nor the region detail grows
 * with them.
 *
 * Order: the fit's own participant order by default, or one column
 * ascending or descending (numbers by value, text in natural order, flags
 * by how many, then which). Missing values (null) come last in both
 * directions, as in the app's tables; ties keep the fit's order, so pages
 * never overlap or skip a row. `search` keeps participants whose id
 * contains it (letter case ignored); `total` counts the rows that match.
 */
import type { Queryable } from "../../db/client";
import type { Fit } from "../../db/schema";
import type {
  ParticipantOrder,
  RegionDetailPoint,
  RegionParticipantsPage,
} from "../../contract/views/fits";
import { regionParticipantRows } from "./fits";
import type { RegionPoints } from "../jobs/region-points";
import { sharedRegionReadJobs } from "../jobs/region-read-jobs";

/** Most rows in one page. */
export const PARTICIPANT_PAGE_MAX = 1000;

export interface RegionParticipantsQuery {
  offset: number;
  limit: number;
  sort: ParticipantOrder;
  direction: "asc" | "desc";
  search?: string;
}

/** The positions (in the fit's order) of `points` in the order asked for (see the module note). */
function sortedPositions(
  points: RegionPoints,
  sort: ParticipantOrder,
  direction: "asc" | "desc",
): Promise<Uint32Array> {
  if (sort === "position") {
    const n = points.n;
    const out = new Uint32Array(n);
    for (let i = 0; i < n; i++) out[i] = direction === "asc" ? i : n - 1 - i;
    return Promise.resolve(out);
  }
  return sharedRegionReadJobs().order(points.sortKeys(sort), direction);
}

/**
 * What the pages of one finished region reuse: its orders and its ids in
 * lower case, made when first asked for. Kept beside the region's points
 * (services/fits.ts keeps those while the region is read), so they
 * go when the points go. Sorting 20,000 participants costs tens of
 * milliseconds (in the region reads' thread at that size); a page from a
 * kept order costs a slice. Readers asking for an order while it is
 * sorted share that sort; a failed one is not kept.
 */
interface PageMemo {
  orders: Map<string, Promise<Uint32Array>>;
  lowerIds: string[] | null;
}
const memos = new WeakMap<RegionPoints, PageMemo>();

/**
 * One page of a finished fit's region participants with every diagnostic.
 * Throws 409 (fit not done), 404 (no such region).
 */
export async function regionParticipants(
  db: Queryable,
  fit: Fit,
  region: string,
  query: RegionParticipantsQuery,
): Promise<RegionParticipantsPage> {
  const { points } = await regionParticipantRows(db, fit, region);
  let memo = memos.get(points);
  if (!memo) {
    memo = { orders: new Map(), lowerIds: null };
    memos.set(points, memo);
  }
  const { sort, direction } = query;
  const orderKey = `${sort} ${direction}`;
  let sorting = memo.orders.get(orderKey);
  if (!sorting) {
    const orders = memo.orders;
    sorting = sortedPositions(points, sort, direction);
    orders.set(orderKey, sorting);
    sorting.catch(() => orders.delete(orderKey));
  }
  const order = await sorting;
  const needle = query.search?.trim().toLowerCase() || null;
  const end = query.offset + query.limit;
  const rows: RegionDetailPoint[] = [];
  let total = order.length;
  if (needle) {
    memo.lowerIds ??= Array.from({ length: points.n }, (_, i) =>
      points.participant(i).toLowerCase(),
    );
    const ids = memo.lowerIds;
    total = 0;
    for (const position of order) {
      if (!ids[position].includes(needle)) continue;
      if (total >= query.offset && total < end) rows.push(points.point(position));
      total++;
    }
  } else {
    for (const position of order.subarray(query.offset, end)) rows.push(points.point(position));
  }
  return {
    fitId: fit.id,
    region,
    n: points.n,
    total,
    offset: query.offset,
    limit: query.limit,
    sort,
    direction,
    search: needle,
    rows,
  };
}
