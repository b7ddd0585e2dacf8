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

/** Most rows in one page. */
export const PARTICIPANT_PAGE_MAX = 1000;

export interface RegionParticipantsQuery {
  offset: number;
  limit: number;
  sort: ParticipantOrder;
  direction: "asc" | "desc";
  search?: string;
}

type Comparable = string | number | null;

/** Text in natural order ("sub-2" before "sub-10"), as the app's tables sort it. */
const naturalCollator = new Intl.Collator("en", { numeric: true, sensitivity: "base" });
const compareValues = (a: string | number, b: string | number) =>
  typeof a === "number" && typeof b === "number"
    ? a - b
    : naturalCollator.compare(String(a), String(b));

function orderValue(
  point: RegionDetailPoint,
  sort: Exclude<ParticipantOrder, "position">,
): Comparable {
  if (sort === "flags")
    return point.flags.length === 0 ? null : `${point.flags.length} ${point.flags.join(", ")}`;
  const value = point[sort];
  return typeof value === "number" && !Number.isFinite(value) ? null : value;
}

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
  const needle = query.search?.trim().toLowerCase() || null;
  let rows = needle ? points.filter((p) => p.participant.toLowerCase().includes(needle)) : points;
  const sort = query.sort;
  if (sort !== "position") {
    const sign = query.direction === "asc" ? 1 : -1;
    rows = rows
      .map((point, position) => ({ point, position, value: orderValue(point, sort) }))
      .sort((a, b) => {
        if (a.value === null || b.value === null)
          return a.value === b.value ? a.position - b.position : a.value === null ? 1 : -1;
        return sign * compareValues(a.value, b.value) || a.position - b.position;
      })
      .map((e) => e.point);
  } else if (query.direction === "desc") {
    rows = [...rows].reverse();
  }
  return {
    fitId: fit.id,
    region,
    n: points.length,
    total: rows.length,
    offset: query.offset,
    limit: query.limit,
    sort,
    direction: query.direction,
    search: needle,
    rows: rows.slice(query.offset, query.offset + query.limit),
  };
}
