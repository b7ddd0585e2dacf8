/**
 * Number formatting for plot labels, tick labels, accessible names and table
 * cells. Negative numbers use the typographic minus sign (U+2212) so columns
 * of figures line up; thousands are grouped with commas; a missing value
 * (null, undefined, NaN) prints as "n/a", as the participant sheet writes it.
 */

import { MINUS } from "../../contract/results-sentences";

/** The minus sign (U+2212): one definition, with the manuscript's reporting rules. */
export { MINUS };
export const MISSING = "n/a";

/** True for null, undefined and any non-finite number. */
export function isMissingNumber(value: number | null | undefined): value is null | undefined {
  return value === null || value === undefined || !Number.isFinite(value);
}

/** Groups the integer digits of an unsigned decimal string by thousands: "1234567.5" → "1,234,567.5". */
function groupThousands(unsigned: string): string {
  const [whole, fraction] = unsigned.split(".");
  const grouped = whole.replace(/\B(?=(\d{3})+(?!\d))/g, ",");
  return fraction === undefined ? grouped : `${grouped}.${fraction}`;
}

/** Puts the minus sign back on and never prints a negative zero ("−0.00"). */
function signed(negative: boolean, unsigned: string): string {
  const isZero = /^[0.,]*$/.test(unsigned);
  return negative && !isZero ? MINUS + unsigned : unsigned;
}

/**
 * Fixed-point text with `decimals` digits after the point: formatFixed(-0.5, 2)
 * = "−0.50", formatFixed(12345.6, 0) = "12,346". Cost O(digits).
 */
export function formatFixed(value: number | null | undefined, decimals: number): string {
  if (isMissingNumber(value)) return MISSING;
  const d = Math.max(0, Math.min(20, Math.round(decimals)));
  return signed(value < 0, groupThousands(Math.abs(value).toFixed(d)));
}

/**
 * A value with about `significant` significant digits for labels and cells:
 * trailing zeros are dropped (0.420 → "0.42"), values of 1,000 and more are
 * rounded to whole numbers ("2,000"), and values smaller than 0.0001 in size
 * use powers of ten ("1.2×10⁻⁵") rather than a run of zeros.
 */
export function formatValue(value: number | null | undefined, significant = 3): string {
  if (isMissingNumber(value)) return MISSING;
  if (value === 0) return "0";
  const size = Math.abs(value);
  const digits = Math.max(1, Math.min(15, Math.round(significant)));
  if (size >= 10 ** Math.max(digits, 3)) return formatFixed(value, 0);
  if (size < 1e-4) return scientific(value, digits);
  let text = size.toPrecision(digits);
  if (text.includes("e")) {
    // toPrecision switches to exponent form when the integer part has more digits than asked
    text = size.toFixed(0);
  } else if (text.includes(".")) {
    text = text.replace(/0+$/, "").replace(/\.$/, "");
  }
  return signed(value < 0, groupThousands(text));
}

/**
 * An interval's two ends at one number of decimals, so they read as a pair:
 * the decimals that give the larger end in size `significant` significant
 * digits (1.39 and 3.3 → "1.39 to 3.30"; 0.638 and 2.28 → "0.64 to 2.28").
 * Ends of 1,000 and more print whole; when the larger end is under 0.0001
 * each end prints as formatValue does. "n/a" for a missing end.
 */
export function formatInterval(
  low: number | null | undefined,
  high: number | null | undefined,
  significant = 3,
  joiner = " to ",
): string {
  if (isMissingNumber(low) || isMissingNumber(high)) return MISSING;
  const size = Math.max(Math.abs(low), Math.abs(high));
  const digits = Math.max(1, Math.min(15, Math.round(significant)));
  if (size < 1e-4)
    return `${formatValue(low, significant)}${joiner}${formatValue(high, significant)}`;
  // digits before the point of the larger end (after rounding to `digits` significant digits)
  const whole = Math.floor(Math.log10(Number(size.toPrecision(digits)))) + 1;
  const decimals = size >= 10 ** Math.max(digits, 3) ? 0 : Math.max(0, digits - whole);
  return `${formatFixed(low, decimals)}${joiner}${formatFixed(high, decimals)}`;
}

const SUPERSCRIPT: Record<string, string> = {
  "0": "⁰",
  "1": "¹",
  "2": "²",
  "3": "³",
  "4": "⁴",
  "5": "⁵",
  "6": "⁶",
  "7": "⁷",
  "8": "⁸",
  "9": "⁹",
  "-": "⁻",
};

function scientific(value: number, digits: number): string {
  const [mantissa, exponent] = Math.abs(value)
    .toExponential(digits - 1)
    .split("e");
  const m = mantissa.includes(".") ? mantissa.replace(/0+$/, "").replace(/\.$/, "") : mantissa;
  const e = String(Number(exponent))
    .split("")
    .map((c) => SUPERSCRIPT[c] ?? c)
    .join("");
  return signed(value < 0, `${m}×10${e}`);
}

/** A whole count with thousands grouped: 2000 → "2,000". */
export function formatCount(value: number): string {
  return formatFixed(Math.round(value), 0);
}

/**
 * A p-value as the product reports it: "p < 0.001" below one in a thousand,
 * otherwise "p = 0.034" (three decimals). Throws a RangeError outside [0, 1].
 */
export function formatP(p: number): string {
  if (!Number.isFinite(p) || p < 0 || p > 1)
    throw new RangeError(`formatP: p must lie in [0, 1] (got ${p})`);
  if (p < 0.001) return "p < 0.001";
  return `p = ${p.toFixed(3)}`;
}

/** A fraction as a percentage: formatPercent(0.8) = "80%". */
export function formatPercent(fraction: number | null | undefined, decimals = 0): string {
  if (isMissingNumber(fraction)) return MISSING;
  return `${formatFixed(fraction * 100, decimals)}%`;
}
