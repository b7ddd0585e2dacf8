import { expect } from "vitest";

/** The accuracy goal of the distribution functions: 1e-12 relative, or 1e-300 absolute deep in the tails. */
export const RELATIVE = 1e-12;

export function expectClose(got: number, want: number, what: string): void {
  const error = Math.abs(got - want);
  const ok = error <= RELATIVE * Math.abs(want) || error <= 1e-300;
  expect(ok, `${what}: got ${got}, want ${want}, relative error ${error / Math.abs(want)}`).toBe(
    true,
  );
}

/** A printed table value to its printed digits: within half a unit of the last printed decimal. */
export function expectPrinted(got: number, printed: number, decimals: number, what: string): void {
  const error = Math.abs(got - printed);
  expect(error <= 0.5 * 10 ** -decimals + 1e-15, `${what}: got ${got}, table ${printed}`).toBe(
    true,
  );
}
