import type { DesignMatrix } from "../linear/design-matrix";
import { designTimesVector } from "../linear/design-times-vector";
import type { GlmFamily } from "./glm-family";
import type { SeparationDiagnosis } from "./glm-result";
import { irlsStep, irlsWorkspace } from "./irls-step";

/**
 * Tells whether a maximum-likelihood estimate exists, by watching where further Newton steps go.
 *
 * References:
 * - Albert, A. & Anderson, J. A. (1984). On the existence of maximum likelihood estimates in
 *   logistic regression models. Biometrika 71: 1-10. (complete and quasi-complete separation)
 * - Lesaffre, E. & Albert, A. (1989). Partial separation in logistic discrimination. Journal of
 *   the Royal Statistical Society B 51: 109-116. (diverging estimates as the symptom)
 *
 * At a true maximum, Newton steps converge quadratically: after a few more steps the linear
 * predictor no longer moves. Under separation (or a Poisson fit whose means tend to 0) the
 * likelihood keeps rising along a direction of recession, and each step moves the affected
 * linear predictors by about one unit. The check runs `extraSteps` further steps and calls the
 * estimate divergent when the last step still moves some linear predictor by more than
 * `divergenceThreshold`.
 */
export interface SeparationCheckOptions {
  /** Further Newton steps taken from the final estimate. Default 8. */
  extraSteps?: number;
  /** Movement of a linear predictor in the last step that counts as divergence. Default 0.5. */
  divergenceThreshold?: number;
  /** A fitted mean within this of 0 or 1 (0 for counts) is at the boundary. Default 1e-8. */
  boundaryTolerance?: number;
}

const NO_SEPARATION: SeparationDiagnosis = { kind: "none", boundaryObservations: 0, divergingCoefficients: [] };

/**
 * Diagnoses separation from a fit's final coefficients. Returns kind "none" when the estimate is a
 * proper maximum; otherwise the kind, how many observations sit at the boundary, and which
 * coefficients keep moving. Never throws on valid fit output.
 * Example: for y = [0, 0, 1, 1] on x = [1, 2, 3, 4] (logit) the result is kind "complete".
 */
export function detectSeparation(
  design: DesignMatrix,
  response: ArrayLike<number>,
  family: GlmFamily,
  coefficients: readonly number[],
  options: SeparationCheckOptions = {},
): SeparationDiagnosis {
  const extraSteps = options.extraSteps ?? 8;
  const divergenceThreshold = options.divergenceThreshold ?? 0.5;
  const boundaryTolerance = options.boundaryTolerance ?? 1e-8;
  const rows = design.rows;
  const workspace = irlsWorkspace(rows);
  let beta: Float64Array = Float64Array.from(coefficients);
  const linearPredictor = designTimesVector(design, beta);
  const previous = new Float64Array(rows);
  const mean = new Float64Array(rows);
  family.meanOf(linearPredictor, mean);
  let lastShift = 0;
  let collapsed = false;
  const start = Float64Array.from(beta);
  for (let step = 0; step < extraSteps; step += 1) {
    const next = irlsStep(design, family, response, linearPredictor, mean, workspace);
    if (!next.ok) {
      collapsed = true;
      break;
    }
    previous.set(linearPredictor);
    beta = next.coefficients;
    designTimesVector(design, beta, linearPredictor);
    family.meanOf(linearPredictor, mean);
    lastShift = 0;
    for (let i = 0; i < rows; i += 1) lastShift = Math.max(lastShift, Math.abs(linearPredictor[i]! - previous[i]!));
  }
  if (!collapsed && !(lastShift > divergenceThreshold)) return NO_SEPARATION;
  const boundaryObservations = family.boundaryCount(mean, boundaryTolerance);
  // Coefficients that move along the direction of recession, relative to the largest movement.
  const movement = design.columnNames.map((_, j) => Math.abs(beta[j]! - start[j]!));
  const largest = Math.max(...movement);
  const divergingCoefficients = design.columnNames.filter((_, j) => movement[j]! > 0.1 * largest && movement[j]! > 1e-6);
  const deviance = family.deviance(response, mean, linearPredictor);
  // Complete separation: the likelihood tends to its ceiling (deviance 0 for binary data).
  const kind = family.name === "binomial" && deviance < 1e-6 ? "complete" : "quasi_complete";
  return { kind, boundaryObservations, divergingCoefficients };
}
