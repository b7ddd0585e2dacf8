import { formatP } from "../charts/number-format";

/** A p-value without its "p =" prefix, for table cells and running text: "< 0.001" or "0.034". */
export function pText(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return "n/a";
  return formatP(p).replace(/^p = /, "").replace(/^p /, "");
}

/** A p-value for running text: "p < 0.001" or "p = 0.034" ("p n/a" when missing). */
export function pPhrase(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return "p n/a";
  return formatP(p);
}
