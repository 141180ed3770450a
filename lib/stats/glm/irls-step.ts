import type { DesignMatrix } from "../linear/design-matrix";
import { solveWeightedNormalEquations, type NormalEquationsSolution } from "../linear/weighted-normal-equations";
import type { GlmFamily } from "./glm-family";

/** Scratch arrays of one fit, allocated once and reused by every iteration. */
export interface IrlsWorkspace {
  readonly weights: Float64Array;
  readonly working: Float64Array;
}

export function irlsWorkspace(rows: number): IrlsWorkspace {
  return { weights: new Float64Array(rows), working: new Float64Array(rows) };
}

/**
 * One Fisher-scoring (IRLS) step from the current linear predictor and means: solves
 * X'WX b = X'Wz for the working weights W and working response z. Returns the new coefficients
 * with the solution of X'WX (its inverse on demand), or the first dependent column when X'WX is
 * not positive definite at these weights (a singular design, or weights collapsed towards 0
 * under separation). A design that declares a factor-plus-covariates structure is solved through
 * its factor block (see solveWeightedNormalEquations).
 *
 * References: Green, P. J. (1984). Iteratively reweighted least squares for maximum likelihood
 * estimation. Journal of the Royal Statistical Society B 46: 149-192.
 */
export function irlsStep(
  design: DesignMatrix,
  family: GlmFamily,
  response: ArrayLike<number>,
  linearPredictor: Float64Array,
  mean: Float64Array,
  workspace: IrlsWorkspace,
): { ok: true; coefficients: Float64Array; information: NormalEquationsSolution } | { ok: false; dependentColumn: number } {
  family.workingWeightsAndResponse(linearPredictor, mean, response, workspace.weights, workspace.working);
  const outcome = solveWeightedNormalEquations(design, workspace.weights, workspace.working);
  if (!outcome.ok) return { ok: false, dependentColumn: outcome.column };
  return { ok: true, coefficients: outcome.solution.coefficients, information: outcome.solution };
}
