/**
 * Per-study output of a fit: weights in percent, fitted values, raw and standardized residuals,
 * leverage (hat values).
 *
 * References:
 * - Viechtbauer, W. & Cheung, M. W.-L. (2010). Outlier and influence diagnostics for
 *   meta-analysis. Research Synthesis Methods 1: 112-125 (standardized residuals and hat values).
 *
 * With u_i = 1 / (v_i + tau^2) and the model covariance C = (X'WX)^{-1}:
 *   leverage h_i = w_i x_i' C x_i, Var(e_i) = v_i + tau^2 - x_i' C x_i (per copy of a case-weighted
 *   study), standardized residual e_i / sqrt(Var(e_i)). A study with leverage 1 is fitted exactly and
 *   its standardized residual is undefined (NaN here, listed in `undefinedStandardized`).
 */
import type { WeightedFit } from "./weighted-fit";

export interface StudyDiagnosticArrays {
  readonly weightPercent: Float64Array;
  readonly fitted: Float64Array;
  readonly residuals: Float64Array;
  readonly standardizedResiduals: Float64Array;
  readonly leverage: Float64Array;
  /** 0-based indices of studies whose standardized residual is undefined. */
  readonly undefinedStandardized: readonly number[];
}

/**
 * Input: a workspace evaluated at the estimated tau^2. Returns one value per study.
 * Example: two studies with equal variances each get weightPercent 50.
 */
export function studyDiagnostics(fit: WeightedFit): StudyDiagnosticArrays {
  const { k, p, estimates, caseWeights, design } = fit.problem;
  const weightPercent = new Float64Array(k);
  const fitted = new Float64Array(k);
  const residuals = new Float64Array(k);
  const standardizedResiduals = new Float64Array(k);
  const leverage = new Float64Array(k);
  const undefinedStandardized: number[] = [];
  const { coefficients, inverse, unitWeights } = fit;
  const totalWeight = fit.sumWeights;
  for (let i = 0; i < k; i += 1) {
    const offset = i * p;
    let mean = 0;
    let quadratic = 0;
    for (let a = 0; a < p; a += 1) {
      const xa = design[offset + a]!;
      mean += xa * coefficients[a]!;
      // x' C x over the lower triangle: C_aa x_a^2 + 2 sum_{b<a} C_ab x_a x_b.
      let offDiagonal = 0;
      for (let b = 0; b < a; b += 1) offDiagonal += inverse[a * p + b]! * design[offset + b]!;
      quadratic += xa * (inverse[a * p + a]! * xa + 2 * offDiagonal);
    }
    const u = unitWeights[i]!;
    const w = caseWeights === null ? u : caseWeights[i]! * u;
    weightPercent[i] = (100 * w) / totalWeight;
    fitted[i] = mean;
    residuals[i] = estimates[i]! - mean;
    leverage[i] = w * quadratic;
    const totalVariance = 1 / u;
    const residualVariance = totalVariance - quadratic;
    if (residualVariance > 1e-10 * totalVariance) {
      standardizedResiduals[i] = residuals[i]! / Math.sqrt(residualVariance);
    } else {
      standardizedResiduals[i] = Number.NaN;
      undefinedStandardized.push(i);
    }
  }
  return { weightPercent, fitted, residuals, standardizedResiduals, leverage, undefinedStandardized };
}
