/**
 * Inference on the fixed effects of a meta-analysis at an estimated tau^2: Wald z tests, or the
 * Knapp-Hartung (HKSJ) adjustment with t and F reference distributions.
 *
 * References:
 * - Raudenbush, S. W. (2009). Analyzing effect sizes: random-effects models. In The Handbook of
 *   Research Synthesis and Meta-Analysis, 2nd ed., ch. 16 (Wald tests, the omnibus Q_M).
 * - Hartung, J. & Knapp, G. (2001). A refined method for the meta-analysis of controlled clinical
 *   trials with binary outcome. Statistics in Medicine 20: 3875-3889.
 * - Knapp, G. & Hartung, J. (2003). Improved tests for a random effects meta-regression with a
 *   single covariate. Statistics in Medicine 22: 2693-2710.
 * - Sidik, K. & Jonkman, J. N. (2002). A simple confidence interval for meta-analysis. Statistics
 *   in Medicine 21: 3153-3159.
 *
 * z: Cov(beta) = (X'WX)^{-1}; coefficient tests against N(0, 1); omnibus Q_M = b_m' Cov_mm^{-1} b_m
 * against chi-square(m) for the m moderator coefficients.
 * hksj: Cov(beta) = Q(tau^2) / (k - p) (X'WX)^{-1} (not truncated at 1); t(k - p) tests and
 * intervals; omnibus F = Q_M / m against F(m, k - p).
 */
import { choleskyFactor, choleskySolve } from "../linear/cholesky";
import { normalQuantileStd, normalTwoSidedP } from "../distributions/normal";
import { studentTQuantile, studentTTwoSidedP } from "../distributions/student-t";
import { chiSquareUpperP } from "../distributions/chi-square";
import { fisherFUpperP } from "../distributions/fisher-f";
import { ModelInputError } from "../model-error";
import type { WeightedFit } from "./weighted-fit";

export const INFERENCE_TESTS = ["z", "hksj"] as const;
export type InferenceTest = (typeof INFERENCE_TESTS)[number];

export interface TestDescription {
  readonly test: InferenceTest;
  readonly name: string;
  readonly description: string;
  readonly references: readonly string[];
}

export const TEST_DESCRIPTIONS: Readonly<Record<InferenceTest, TestDescription>> = {
  z: {
    test: "z",
    name: "Wald z",
    description: "Coefficient covariance (X'WX)^{-1}; z tests and normal-quantile intervals; omnibus Wald chi-square on the moderators.",
    references: ["Raudenbush, S. W. (2009). In The Handbook of Research Synthesis and Meta-Analysis, 2nd ed., ch. 16."],
  },
  hksj: {
    test: "hksj",
    name: "Knapp-Hartung (HKSJ)",
    description: "Coefficient covariance scaled by Q(tau^2) / (k - p); t tests and intervals on k - p df; omnibus F(m, k - p).",
    references: [
      "Hartung, J. & Knapp, G. (2001). Statistics in Medicine 20: 3875-3889.",
      "Knapp, G. & Hartung, J. (2003). Statistics in Medicine 22: 2693-2710.",
      "Sidik, K. & Jonkman, J. N. (2002). Statistics in Medicine 21: 3153-3159.",
    ],
  },
};

/** Inference in the conditioned coordinates (gamma) of the design. */
export interface ConditionedInference {
  readonly test: InferenceTest;
  /** Cov(gamma) used by the tests (scaled under HKSJ), p x p row-major. */
  readonly covariance: Float64Array;
  /** 1 for z; Q(tau^2) / (k - p) for HKSJ. */
  readonly scale: number;
  /** k - p for HKSJ, null for z. */
  readonly residualDf: number | null;
  /** Q_M (z) or F (HKSJ) for the moderator columns; null without moderators. */
  readonly moderatorStatistic: number | null;
  readonly moderatorDf: number;
}

/**
 * Covariance and omnibus statistic at the current evaluation of `fit` (which must be at the
 * estimated tau^2). `moderatorColumns` lists the non-intercept columns.
 * Throws ModelInputError under HKSJ when Q(tau^2) = 0, which would make every standard error 0.
 */
export function conditionedInference(fit: WeightedFit, test: InferenceTest, moderatorColumns: readonly number[]): ConditionedInference {
  const { p, effectiveK } = fit.problem;
  const residualDf = effectiveK - p;
  let scale = 1;
  if (test === "hksj") {
    scale = fit.q / residualDf;
    // Q is a sum of squared residuals: when the residuals are at rounding level relative to the
    // estimates (an exact fit), Q is noise, and so would every standard error be.
    let weightedSquares = 0;
    for (let i = 0; i < fit.problem.k; i += 1) weightedSquares += fit.weights[i]! * fit.problem.estimates[i]! ** 2;
    const roundingLevel = 1e4 * Number.EPSILON ** 2 * weightedSquares;
    if (!(scale > 0) || fit.q <= roundingLevel) {
      throw new ModelInputError(
        "Knapp-Hartung inference is undefined here: the estimates fit the model exactly (generalised Q = 0), which would make every standard error 0; use the z test",
      );
    }
  }
  const covariance = new Float64Array(p * p);
  for (let i = 0; i < p * p; i += 1) covariance[i] = fit.inverse[i]! * scale;
  return {
    test,
    covariance,
    scale,
    residualDf: test === "hksj" ? residualDf : null,
    moderatorStatistic: moderatorColumns.length > 0 ? waldStatistic(fit.coefficients, covariance, p, moderatorColumns) / (test === "hksj" ? moderatorColumns.length : 1) : null,
    moderatorDf: moderatorColumns.length,
  };
}

/** b_m' Cov_mm^{-1} b_m over the listed columns. */
export function waldStatistic(coefficients: Float64Array, covariance: Float64Array, p: number, columns: readonly number[]): number {
  const m = columns.length;
  const block = new Float64Array(m * m);
  const sub = new Float64Array(m);
  for (let a = 0; a < m; a += 1) {
    sub[a] = coefficients[columns[a]!]!;
    for (let b = 0; b < m; b += 1) block[a * m + b] = covariance[columns[a]! * p + columns[b]!]!;
  }
  const outcome = choleskyFactor(block, m, 1e-14);
  if (!outcome.ok) throw new ModelInputError("the covariance of the moderator coefficients is singular; the omnibus test cannot be computed");
  const solved = choleskySolve(outcome.factor, sub);
  let statistic = 0;
  for (let a = 0; a < m; a += 1) statistic += sub[a]! * solved[a]!;
  return statistic;
}

/** Two-sided p-value of a coefficient statistic under `test`. */
export function coefficientPValue(statistic: number, test: InferenceTest, residualDf: number | null): number {
  return test === "z" ? normalTwoSidedP(statistic) : studentTTwoSidedP(statistic, residualDf!);
}

/** The critical value c of the two-sided interval estimate +/- c SE at `level`. */
export function criticalValue(level: number, test: InferenceTest, residualDf: number | null): number {
  const upper = 1 - (1 - level) / 2;
  return test === "z" ? normalQuantileStd(upper) : studentTQuantile(upper, residualDf!);
}

/** Upper-tail p-value of the omnibus statistic (chi-square(m) for z, F(m, k - p) for HKSJ). */
export function moderatorPValue(inference: ConditionedInference): number | null {
  if (inference.moderatorStatistic === null) return null;
  return inference.test === "z"
    ? chiSquareUpperP(inference.moderatorStatistic, inference.moderatorDf)
    : fisherFUpperP(inference.moderatorStatistic, inference.moderatorDf, inference.residualDf!);
}
