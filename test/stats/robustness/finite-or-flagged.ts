import { expect } from "vitest";
import { ModelInputError } from "@/lib/stats/model-error";
import type { StatWarning, WarningCode } from "@/lib/stats/warnings";

/**
 * The rule every fit obeys at the edges of valid input: each number it reports is finite, and a
 * fit that did not converge says so with a warning. The one documented exception is a study
 * fitted exactly (leverage 1), whose standardized residual is NaN with an implausible_fit warning
 * naming it (lib/stats/meta/study-diagnostics.ts). A null is not a number: it marks a quantity
 * as unavailable (e.g. a GLM's standard errors under separation), and the caller checks where
 * nulls may appear and that a warning names them.
 */

/** Paths of every number in `value` (objects, arrays, typed arrays) that is NaN or infinite; nulls are skipped. */
export function nonFinitePaths(value: unknown, path = "result", seen = new Set<unknown>()): string[] {
  if (typeof value === "number") return Number.isFinite(value) ? [] : [`${path} = ${value}`];
  if (value === null || typeof value !== "object" || seen.has(value)) return [];
  seen.add(value);
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    const out: string[] = [];
    Array.from(value as unknown as ArrayLike<number>).forEach((x, i) => {
      if (!Number.isFinite(x)) out.push(`${path}[${i}] = ${x}`);
    });
    return out;
  }
  if (Array.isArray(value)) return value.flatMap((item, i) => nonFinitePaths(item, `${path}[${i}]`, seen));
  return Object.entries(value as Record<string, unknown>).flatMap(([key, item]) => nonFinitePaths(item, `${path}.${key}`, seen));
}

const NOT_CONVERGED: readonly WarningCode[] = ["non_convergence", "iteration_limit", "separation"];

/** Asserts the rule for a fit result with `warnings` and convergence at `converged`. */
export function expectFiniteOrFlagged(result: { warnings: readonly StatWarning[] }, converged: boolean, label: string): void {
  const undefinedResiduals = result.warnings.some((w) => w.code === "implausible_fit" && /standardized residuals are undefined/.test(w.message));
  const bad = nonFinitePaths(result).filter((p) => !(undefinedResiduals && p.startsWith("result.studies.standardizedResiduals[")));
  expect(bad, `${label}: non-finite output`).toEqual([]);
  if (!converged) expect(result.warnings.some((w) => NOT_CONVERGED.includes(w.code)), `${label}: not converged, so a warning must say so`).toBe(true);
}

/** Runs `fit`; a refusal must be the model's own ModelInputError with a message, never another error. */
export function fitOrRefusal<T>(fit: () => T): { result: T } | { refused: string } {
  try {
    return { result: fit() };
  } catch (error) {
    expect(error instanceof ModelInputError, `refused with ${String(error)}`).toBe(true);
    expect((error as Error).message.length).toBeGreaterThan(10);
    return { refused: (error as Error).message };
  }
}
