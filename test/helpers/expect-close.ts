import { expect } from "vitest";

export interface Tolerance {
  /** Relative tolerance: |actual - expected| <= rtol * |expected| (+ atol). */
  rtol?: number;
  /** Absolute tolerance. */
  atol?: number;
  /** What is being compared, printed on failure. */
  label?: string;
}

/**
 * The one tolerance check. Passes when |actual - expected| <= atol + rtol * |expected|.
 * NaN never matches anything (not even NaN), so a silent NaN cannot pass.
 * The failure message prints both values, the difference and the tolerance.
 */
export function expectClose(actual: number, expected: number, { rtol = 1e-9, atol = 0, label }: Tolerance = {}): void {
  const difference = Math.abs(actual - expected);
  const allowed = atol + rtol * Math.abs(expected);
  const ok = Number.isFinite(actual) && Number.isFinite(expected) ? difference <= allowed : actual === expected;
  if (!ok) {
    expect.fail(
      `${label ? `${label}: ` : ""}expected ${expected}, got ${actual}; |difference| = ${difference} > allowed ${allowed} (rtol ${rtol}, atol ${atol})`,
    );
  }
}

/** expectClose over two equal-length arrays, element by element. */
export function expectAllClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tolerance: Tolerance = {}): void {
  expect(actual.length, `${tolerance.label ?? "array"} length`).toBe(expected.length);
  for (let i = 0; i < expected.length; i += 1) {
    expectClose(actual[i] as number, expected[i] as number, { ...tolerance, label: `${tolerance.label ?? "array"}[${i}]` });
  }
}
