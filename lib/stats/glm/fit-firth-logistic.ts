/**
 * Firth's penalised-likelihood logistic regression: maximises
 *   l*(b) = l(b) + 0.5 log det I(b),   I(b) = X' W(b) X,  W = diag(p (1 - p)),
 * whose estimate is finite even under complete or quasi-complete separation and has reduced
 * small-sample bias.
 *
 * References:
 * - Firth, D. (1993). Bias reduction of maximum likelihood estimates. Biometrika 80: 27-38.
 * - Heinze, G. & Schemper, M. (2002). A solution to the problem of separation in logistic
 *   regression. Statistics in Medicine 21: 2409-2419. (modified score, step-halving, Wald SEs)
 *
 * The modified score is U*(b) = X' (y - p + h (1/2 - p)), with h the diagonal of the hat matrix
 * W^{1/2} X I^{-1} X' W^{1/2}; each Newton step b + I^{-1} U* is halved until l* does not fall.
 * Standard errors are sqrt(diag I(b)^{-1}) at the penalised estimate (Wald).
 * The information is formed from the design with its columns centred on the intercept
 * (column-centring.ts): log det I and the hat values do not change under that reparametrisation
 * (its matrix is unit triangular), while a predictor far from 0 relative to its spread keeps its
 * digits. The iteration runs in the centred coefficients (linear predictor included, so the
 * step-halving compares penalised likelihoods free of the rounding of large cancelling terms),
 * which are mapped back at the end.
 */
import type { DesignMatrix } from "../linear/design-matrix";
import { choleskyFactor, choleskyInverse, choleskyLogDeterminant, choleskySolve } from "../linear/cholesky";
import { centredLinearPredictor, columnCentring, uncentreCoefficients, uncentreInverse, type ColumnCentring } from "../linear/column-centring";
import { designTimesVector } from "../linear/design-times-vector";
import { weightedCrossProducts } from "../linear/weighted-cross-products";
import { warning, type StatWarning } from "../warnings";
import { binomialLogit } from "./binomial-logit";
import type { GlmResult, SeparationDiagnosis } from "./glm-result";
import { nullDevianceOf } from "./null-deviance";
import { validateGlmInput } from "./validate-glm-input";
import { waldInference } from "./wald-inference";

export interface FirthFitOptions {
  /** Newton iterations at most. Default 1000 (the modified-score iteration converges linearly). */
  maxIterations?: number;
  /** Converged when every |step| < tolerance * (1 + |b_j|), in the centred coefficients. Default 1e-10. */
  tolerance?: number;
  /** Halvings of one step at most. Default 40. */
  maxStepHalvings?: number;
  /** No coefficient of the centred design moves by more than this in one step (keeps early steps sane). Default 5. */
  maxStep?: number;
  /** The separation found by the maximum-likelihood fit, kept on the result for the record. */
  diagnosis?: SeparationDiagnosis;
}

interface PenalisedState {
  linearPredictor: Float64Array;
  mean: Float64Array;
  weights: Float64Array;
  information: Float64Array;
  penalised: number;
  logLikelihood: number;
  ok: boolean;
}

/** The penalised likelihood at centred coefficients b', with the information I' of the centred design. */
function evaluate(design: DesignMatrix, centring: ColumnCentring | null, response: ArrayLike<number>, coefficients: Float64Array): PenalisedState {
  const rows = design.rows;
  const linearPredictor = centring ? centredLinearPredictor(design, centring, coefficients) : designTimesVector(design, coefficients);
  const mean = new Float64Array(rows);
  binomialLogit.meanOf(linearPredictor, mean);
  const weights = new Float64Array(rows);
  for (let i = 0; i < rows; i += 1) weights[i] = mean[i]! * (1 - mean[i]!);
  const { xtwx } = weightedCrossProducts(design, weights, weights, centring?.shift);
  const factor = choleskyFactor(xtwx, design.columns, 1e-14);
  const logLikelihood = binomialLogit.logLikelihood(response, mean, linearPredictor);
  if (!factor.ok) return { linearPredictor, mean, weights, information: xtwx, penalised: -Infinity, logLikelihood, ok: false };
  return { linearPredictor, mean, weights, information: xtwx, penalised: logLikelihood + 0.5 * choleskyLogDeterminant(factor.factor), logLikelihood, ok: true };
}

/** The modified score U*' of the centred design at a state, with the inverse information I'^-1 it used. */
function modifiedScore(design: DesignMatrix, centring: ColumnCentring | null, response: ArrayLike<number>, state: PenalisedState): { score: Float64Array; inverse: Float64Array } | null {
  const { rows, columns, data } = design;
  const factor = choleskyFactor(state.information, columns, 1e-14);
  if (!factor.ok) return null;
  const inverse = choleskyInverse(factor.factor);
  const shift = centring?.shift ?? new Float64Array(columns);
  const score = new Float64Array(columns);
  const nonZero = new Int32Array(columns);
  const value = new Float64Array(columns);
  for (let i = 0; i < rows; i += 1) {
    const offset = i * columns;
    let count = 0;
    for (let j = 0; j < columns; j += 1) {
      const x = data[offset + j]! - shift[j]!;
      if (x !== 0) {
        nonZero[count] = j;
        value[count++] = x;
      }
    }
    // h_i = w_i x_i' I^{-1} x_i over the row's non-zero (centred) entries.
    let quadratic = 0;
    for (let a = 0; a < count; a += 1) {
      const ja = nonZero[a]!;
      const xa = value[a]!;
      for (let b = 0; b < count; b += 1) quadratic += xa * inverse[ja * columns + nonZero[b]!]! * value[b]!;
    }
    const mu = state.mean[i]!;
    const leverage = state.weights[i]! * quadratic;
    const residual = response[i]! - mu + leverage * (0.5 - mu);
    for (let a = 0; a < count; a += 1) score[nonZero[a]!] += value[a]! * residual;
  }
  return { score, inverse };
}

/**
 * Fits a binary (0/1) response by Firth's penalised likelihood with the logit link.
 *
 * Input: as fitGlm with binomialLogit (full-rank design, more rows than columns, 0/1 response).
 * Returns a GlmResult with estimator "firth_penalised", a "firth_penalised" warning naming the
 * method, deviance = -2 l(b) at the penalised estimate, and penalisedLogLikelihood = l*(b).
 * A fit that did not converge has converged = false and a non_convergence warning.
 * Throws ModelInputError for input that cannot be fitted.
 * Example: y = [0, 0, 1, 1] on x = [1, 2, 3, 4] (complete separation) has a finite Firth slope.
 */
export function fitFirthLogistic(design: DesignMatrix, responseValues: ArrayLike<number>, options: FirthFitOptions = {}): GlmResult {
  const response = Float64Array.from(responseValues);
  const maxIterations = options.maxIterations ?? 1000;
  const tolerance = options.tolerance ?? 1e-10;
  const maxStepHalvings = options.maxStepHalvings ?? 40;
  const maxStep = options.maxStep ?? 5;
  validateGlmInput(design, response, binomialLogit);
  const { rows, columns } = design;
  const centring = columnCentring(design);
  // b', the coefficients of the centred design (the design's own when there is nothing to centre).
  let coefficients = new Float64Array(columns);
  let state = evaluate(design, centring, response, coefficients);
  let converged = false;
  let iterations = 0;
  let stepHalvings = 0;
  let inverse: Float64Array | null = null;
  const warnings: StatWarning[] = [];
  for (iterations = 1; iterations <= maxIterations; iterations += 1) {
    const scored = modifiedScore(design, centring, response, state);
    if (!scored) break;
    inverse = scored.inverse;
    const factor = choleskyFactor(state.information, columns, 1e-14);
    if (!factor.ok) break;
    const step = choleskySolve(factor.factor, scored.score);
    const largest = Math.max(...Array.from(step, Math.abs));
    if (largest > maxStep) for (let j = 0; j < columns; j += 1) step[j] = (step[j]! * maxStep) / largest;
    let candidate = coefficients.map((value, j) => value + step[j]!);
    let candidateState = evaluate(design, centring, response, candidate);
    let halvings = 0;
    while ((!candidateState.ok || candidateState.penalised < state.penalised - 1e-12 * Math.abs(state.penalised)) && halvings < maxStepHalvings) {
      halvings += 1;
      for (let j = 0; j < columns; j += 1) step[j] = step[j]! / 2;
      candidate = coefficients.map((value, j) => value + step[j]!);
      candidateState = evaluate(design, centring, response, candidate);
    }
    stepHalvings += halvings;
    if (!candidateState.ok) break;
    coefficients = candidate;
    state = candidateState;
    let small = true;
    for (let j = 0; j < columns; j += 1) if (Math.abs(step[j]!) >= tolerance * (1 + Math.abs(coefficients[j]!))) small = false;
    if (small) {
      converged = true;
      break;
    }
  }
  iterations = Math.min(iterations, maxIterations);
  const finalScore = modifiedScore(design, centring, response, state);
  inverse = finalScore ? finalScore.inverse : inverse;
  if (inverse && centring) uncentreInverse(centring, inverse);
  if (!converged || !inverse) {
    converged = false;
    warnings.push(warning("non_convergence", `Firth penalised fit did not converge within ${maxIterations} iterations`));
  }
  warnings.push(
    warning(
      "firth_penalised",
      "coefficients maximise Firth's penalised likelihood l(b) + 0.5 log det I(b) (Firth 1993), not the plain likelihood; standard errors are Wald, from I(b)^-1 at the penalised estimate",
    ),
  );
  const coefficientList = Array.from(centring ? uncentreCoefficients(centring, coefficients) : coefficients);
  const wald = waldInference(design.columnNames, coefficientList, inverse, "z", rows - columns, "the information matrix is singular at the last Firth iterate");
  warnings.push(...wald.warnings);
  return Object.freeze({
    family: "binomial",
    link: "logit",
    estimator: "firth_penalised",
    coefficientNames: design.columnNames,
    coefficients: coefficientList,
    standardErrors: wald.standardErrors,
    statistics: wald.statistics,
    statisticName: "z",
    pValues: wald.pValues,
    covariance: wald.covariance,
    dispersion: 1,
    dispersionMethod: "fixed",
    pearsonChiSquare: binomialLogit.pearsonChiSquare(response, state.mean),
    deviance: -2 * state.logLikelihood,
    nullDeviance: nullDevianceOf(design, response, binomialLogit),
    residualDf: rows - columns,
    nullDf: rows - 1,
    logLikelihood: state.logLikelihood,
    aic: null,
    penalisedLogLikelihood: state.penalised,
    n: rows,
    converged,
    iterations,
    stepHalvings,
    separation: options.diagnosis ?? { kind: "none" as const, boundaryObservations: 0, divergingCoefficients: [] },
    warnings,
  });
}
