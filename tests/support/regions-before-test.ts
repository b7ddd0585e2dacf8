/**
 * The regions before the test of a least-squares permutation fit, gathered
 * in one piece for checks: `regionsBeforeTestByRegion` with a sink that
 * keeps every region's rows, in order.
 */
import type { FitData, ModelSpec, ParticipantDiagnostics, RegionResult } from "../../contract/spec";
import { type RunFitOptions, regionsBeforeTestByRegion } from "../../server/stats/run-fit";

export function regionsBeforeTest(
  spec: ModelSpec,
  data: FitData,
  options: RunFitOptions = {},
  range?: readonly [number, number],
): { regions: RegionResult[]; participants: ParticipantDiagnostics[] } {
  const participants: ParticipantDiagnostics[] = [];
  const regions = regionsBeforeTestByRegion(spec, data, options, range, (_p, _r, rows) => {
    participants.push(...rows.rows());
  });
  return { regions, participants };
}
