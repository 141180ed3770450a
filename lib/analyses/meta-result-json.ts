import type { MetaModelResult } from "../stats/meta/meta-result";

/**
 * The fitted model as plain JSON for AnalysisRun.result: typed arrays become arrays. A NaN
 * (the engine's mark for an undefined standardized residual, which it always explains in a
 * warning) becomes null; an infinite number is a defect and throws rather than being stored.
 */
export function metaResultJson(result: MetaModelResult): unknown {
  const convert = (value: unknown, path: string): unknown => {
    if (typeof value === "number") {
      if (Number.isNaN(value)) return null;
      if (!Number.isFinite(value)) throw new Error(`the fitted model holds ${value} at ${path}`);
      return value;
    }
    if (ArrayBuffer.isView(value)) return Array.from(value as unknown as ArrayLike<number>, (x, i) => convert(x, `${path}[${i}]`));
    if (Array.isArray(value)) return value.map((x, i) => convert(x, `${path}[${i}]`));
    if (value && typeof value === "object") {
      return Object.fromEntries(Object.entries(value).map(([key, inner]) => [key, convert(inner, `${path}.${key}`)]));
    }
    return value;
  };
  return convert(result, "result");
}
