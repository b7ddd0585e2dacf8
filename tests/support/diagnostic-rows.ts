/**
 * The diagnostics of a fit row by row, for checks against published worked
 * examples: `regressionDiagnosticColumns` read back one object per row,
 * null where a column holds NaN.
 */
import type { Flag } from "../../contract/spec";
import {
  type ColumnVif,
  type FlagThresholds,
  flagsOf,
  nullIfNaN,
  regressionDiagnosticColumns,
} from "../../server/stats/diagnostics";
import type { LinearModelFit, QrDecomposition } from "../../server/stats/linear-model";

export interface DiagnosticRow {
  leverage: number;
  internalStudentized: number | null;
  externalStudentized: number | null;
  cooksDistance: number | null;
  dffits: number | null;
  /** One value per design column; null where undefined. */
  dfbetas: (number | null)[] | null;
  mahalanobis: number | null;
  flags: Flag[];
}

export function regressionDiagnostics(
  qr: QrDecomposition,
  fit: LinearModelFit,
  options: { interceptColumn: number; alpha?: number },
): { rows: DiagnosticRow[]; vif: ColumnVif[]; thresholds: FlagThresholds } {
  const c = regressionDiagnosticColumns(qr, fit, options);
  const { p } = c;
  const rows: DiagnosticRow[] = [];
  for (let i = 0; i < c.n; i++) {
    let dfbetas: (number | null)[] | null = null;
    if (c.hasDfbetas[i]) {
      dfbetas = [];
      for (let j = 0; j < p; j++) dfbetas.push(nullIfNaN(c.dfbetas[i * p + j]));
    }
    rows.push({
      leverage: c.leverage[i],
      internalStudentized: nullIfNaN(c.internalStudentized[i]),
      externalStudentized: nullIfNaN(c.externalStudentized[i]),
      cooksDistance: nullIfNaN(c.cooksDistance[i]),
      dffits: nullIfNaN(c.dffits[i]),
      dfbetas,
      mahalanobis: c.mahalanobis ? c.mahalanobis[i] : null,
      flags: flagsOf(c.flags[i]),
    });
  }
  return { rows, vif: c.vif, thresholds: c.thresholds };
}
