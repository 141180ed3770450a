/**
 * Generalised linear models by iteratively reweighted least squares (Fisher scoring), with
 * step-halving when the deviance rises, Wald standard errors from the inverse Fisher information,
 * optional quasi-likelihood (Pearson) dispersion, and a separation check.
 *
 * References:
 * - Nelder, J. A. & Wedderburn, R. W. M. (1972). Generalized linear models. Journal of the Royal
 *   Statistical Society A 135: 370-384.
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed. Chapman & Hall.
 * - Marschner, I. C. (2011). glm2: fitting generalized linear models with convergence problems.
 *   The R Journal 3(2): 12-15. (step-halving on a deviance increase)
 */
import type { DesignMatrix } from "../linear/design-matrix";
import { designTimesVector } from "../linear/design-times-vector";
import type { NormalEquationsSolution } from "../linear/weighted-normal-equations";
import { ModelInputError } from "../model-error";
import { warning, type StatWarning } from "../warnings";
import type { GlmFamily } from "./glm-family";
import type { DispersionMethod, GlmResult, SeparationDiagnosis } from "./glm-result";
import { detectSeparation, type SeparationCheckOptions } from "./detect-separation";
import { irlsStep, irlsWorkspace } from "./irls-step";
import { pearsonDispersion } from "./pearson-dispersion";
import { singularDesignMessage, validateGlmInput } from "./validate-glm-input";
import { hasInterceptColumn, nullDevianceOf } from "./null-deviance";
import { waldInference } from "./wald-inference";

export interface GlmFitOptions {
  /** Fisher-scoring iterations at most. Default 50. */
  maxIterations?: number;
  /** Converged when |D_new - D_old| / (|D_new| + 0.1) < tolerance (D = deviance). Default 1e-10. */
  tolerance?: number;
  /** Halvings of one step at most when the deviance rises or is not finite. Default 30. */
  maxStepHalvings?: number;
  /** "pearson" estimates the dispersion (quasi-likelihood standard errors). Default "fixed". */
  dispersion?: DispersionMethod;
  separation?: SeparationCheckOptions;
}

/**
 * Fits a GLM of `response` on the columns of `design` (include an intercept column yourself).
 *
 * Input: a design of full column rank with more rows than columns, finite values, and a response
 * the family accepts (0/1 for binomialLogit, whole counts for poissonLog).
 * Returns an immutable GlmResult. A fit that did not converge, or whose estimates diverge
 * (separation), is returned with converged = false or separation.kind != "none" and a warning,
 * never silently: callers must not report its coefficients as estimates. Under separation the
 * standard errors, statistics, p-values and covariance are null, and a "wald_unavailable"
 * warning says so.
 * Throws ModelInputError for input that cannot be fitted (empty, too few rows, non-finite design,
 * invalid response, singular design, or a quasi-likelihood fit with no residual degrees of freedom).
 *
 * Example (space-shuttle O-rings, logit): fitGlm(design [1, temperature], incident, binomialLogit)
 * gives intercept 15.0429 and slope -0.23216.
 */
export function fitGlm(design: DesignMatrix, responseValues: ArrayLike<number>, family: GlmFamily, options: GlmFitOptions = {}): GlmResult {
  // A typed copy keeps every per-observation loop monomorphic.
  const response = Float64Array.from(responseValues);
  const maxIterations = options.maxIterations ?? 50;
  const tolerance = options.tolerance ?? 1e-10;
  const maxStepHalvings = options.maxStepHalvings ?? 30;
  const dispersionMethod = options.dispersion ?? "fixed";
  const { rows, columns } = design;
  // The rank is checked by the first scoring step (all working weights are positive there).
  validateGlmInput(design, response, family, { checkRank: false });
  const workspace = irlsWorkspace(rows);
  const mean = new Float64Array(rows);
  const linearPredictor = new Float64Array(rows);
  family.initialMean(response, mean);
  for (let i = 0; i < rows; i += 1) linearPredictor[i] = family.linkOf(mean[i]!);
  let deviance = family.deviance(response, mean, linearPredictor);
  let coefficients: Float64Array | null = null;
  let information: NormalEquationsSolution | null = null;
  let converged = false;
  let iterations = 0;
  let stepHalvings = 0;
  let stalled = false;
  const warnings: StatWarning[] = [];

  for (iterations = 1; iterations <= maxIterations; iterations += 1) {
    const step = irlsStep(design, family, response, linearPredictor, mean, workspace);
    if (!step.ok) {
      if (!coefficients) throw new ModelInputError(singularDesignMessage(design, step.dependentColumn));
      stalled = true;
      break;
    }
    let proposal = step.coefficients;
    designTimesVector(design, proposal, linearPredictor);
    let proposedDeviance = family.meanAndDeviance(response, linearPredictor, mean);
    let halvings = 0;
    const rises = (value: number) => !Number.isFinite(value) || value > deviance + 1e-12 * (Math.abs(deviance) + 0.1);
    while (coefficients && rises(proposedDeviance) && halvings < maxStepHalvings) {
      halvings += 1;
      const previous: Float64Array = coefficients;
      proposal = proposal.map((value, j) => (value + previous[j]!) / 2);
      designTimesVector(design, proposal, linearPredictor);
      proposedDeviance = family.meanAndDeviance(response, linearPredictor, mean);
    }
    stepHalvings += halvings;
    if (!Number.isFinite(proposedDeviance) || (coefficients && rises(proposedDeviance))) {
      stalled = true;
      if (coefficients) {
        designTimesVector(design, coefficients, linearPredictor);
        family.meanOf(linearPredictor, mean);
      }
      break;
    }
    const change = Math.abs(proposedDeviance - deviance) / (Math.abs(proposedDeviance) + 0.1);
    coefficients = proposal;
    deviance = proposedDeviance;
    if (change < tolerance) {
      converged = true;
      break;
    }
  }
  iterations = Math.min(iterations, maxIterations);
  if (!coefficients) throw new ModelInputError("no scoring step could be taken (maxIterations must be at least 1)");

  // Information at the final estimate (the last step's factor belongs to the previous iterate).
  const final = irlsStep(design, family, response, linearPredictor, mean, workspace);
  information = final.ok ? final.information : null;

  let separation: SeparationDiagnosis = { kind: "none", boundaryObservations: 0, divergingCoefficients: [] };
  const boundary = family.boundaryCount(mean, options.separation?.boundaryTolerance ?? 1e-8);
  if (!converged || boundary > 0 || !information) {
    separation = detectSeparation(design, response, family, Array.from(coefficients), options.separation);
  }
  if (separation.kind !== "none") {
    converged = false;
    const what = family.name === "binomial" ? "fitted probabilities of 0 or 1" : "fitted means of 0";
    warnings.push(
      warning(
        "separation",
        `${separation.kind === "complete" ? "complete" : "quasi-complete"} separation: the maximum-likelihood estimate does not exist ` +
          `(${separation.boundaryObservations} of ${rows} observations tend to ${what}; diverging: ${separation.divergingCoefficients.join(", ") || "the information matrix is singular at the estimate"})`,
      ),
    );
  } else if (!converged) {
    warnings.push(
      warning(
        stalled ? "non_convergence" : "iteration_limit",
        stalled
          ? `scoring stopped after ${iterations} iterations: no step reduced the deviance (after ${maxStepHalvings} halvings)`
          : `no convergence within ${maxIterations} iterations (relative deviance change still >= ${tolerance})`,
      ),
    );
  }

  const residualDf = rows - columns;
  const pearsonChiSquare = family.pearsonChiSquare(response, mean);
  let dispersion = 1;
  if (dispersionMethod === "pearson") {
    if (residualDf < 1) throw new ModelInputError("quasi-likelihood dispersion needs more observations than coefficients");
    dispersion = pearsonDispersion(pearsonChiSquare, residualDf);
  }
  // Without a maximum the information at the last iterate describes no estimate (and vanishes
  // along the diverging direction): the Wald quantities do not exist.
  const covariance = information && separation.kind === "none" ? information.inverse().map((value) => value * dispersion) : null;
  const coefficientList = Array.from(coefficients);
  const statisticName = dispersionMethod === "pearson" ? "t" : "z";
  const remedy = family.name === "binomial" ? "Firth's penalised fit (fitFirthLogistic) gives finite estimates with standard errors" : "leave out or merge the observations whose fitted means tend to 0";
  const wald = waldInference(design.columnNames, coefficientList, covariance, statisticName, residualDf, `no maximum-likelihood estimate exists (separation), so the information matrix at the last iterate describes no estimate; ${remedy}`);
  warnings.push(...wald.warnings);
  const logLikelihood = dispersionMethod === "pearson" ? null : family.logLikelihood(response, mean, linearPredictor, deviance);
  if (dispersionMethod === "pearson" && !(pearsonChiSquare > 1e-10 * rows)) {
    warnings.push(warning("implausible_fit", "Pearson dispersion is 0 to rounding (the model fits every count exactly): quasi-likelihood standard errors are 0 and not usable"));
  }

  return Object.freeze({
    family: family.name,
    link: family.link,
    estimator: "maximum_likelihood",
    coefficientNames: design.columnNames,
    coefficients: coefficientList,
    standardErrors: wald.standardErrors,
    statistics: wald.statistics,
    statisticName,
    pValues: wald.pValues,
    covariance: wald.covariance,
    dispersion,
    dispersionMethod,
    pearsonChiSquare,
    deviance,
    nullDeviance: nullDevianceOf(design, response, family),
    residualDf,
    nullDf: rows - (hasInterceptColumn(design) ? 1 : 0),
    logLikelihood,
    aic: logLikelihood === null ? null : -2 * logLikelihood + 2 * columns,
    penalisedLogLikelihood: null,
    n: rows,
    converged,
    iterations,
    stepHalvings,
    separation,
    warnings,
  });
}
