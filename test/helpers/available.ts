import { expect } from "vitest";

/**
 * The entries of a result field that holds null where a quantity is unavailable (a GLM's standard
 * errors, Wald statistics, p-values, covariance), after asserting that every entry is available.
 * Example: available(fit.standardErrors, "SE") -> number[] (fails the test on a null).
 */
export function available(values: readonly (number | null)[], label: string): number[] {
  const missing = values.flatMap((value, i) => (value === null ? [i] : []));
  expect(missing, `${label}: unavailable (null) entries`).toEqual([]);
  return values as number[];
}
