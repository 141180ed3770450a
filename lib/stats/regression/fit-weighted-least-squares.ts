/**
 * Weighted least squares with classical standard errors, the linear model behind between-year
 * effects, warming slopes and selection gradients.
 *
 * References:
 * - Draper, N. R. & Smith, H. (1998). Applied Regression Analysis, 3rd ed. Wiley, ch. 9.
 * - Chambers, J. M. (1992). Linear models. In Statistical Models in S, ch. 4. (weights as in R's lm)
 *
 * With weights w_i, b = (X'WX)^{-1} X'Wy, sigma^2 = sum w_i r_i^2 / (n - p) and
 * Cov(b) = sigma^2 (X'WX)^{-1}: weights are inverse-variance up to a common factor.
 */
import type { DesignMatrix } from "../linear/design-matrix";
import { choleskyFactor, choleskyInverse, choleskySolve } from "../linear/cholesky";
import { designTimesVector } from "../linear/design-times-vector";
import { weightedCrossProducts } from "../linear/weighted-cross-products";
import { studentTQuantile, studentTTwoSidedP } from "../distributions/student-t";
import { ModelInputError } from "../model-error";

export interface LeastSquaresOptions {
  /** One positive finite weight per row. Default: all 1 (ordinary least squares). */
  weights?: ArrayLike<number>;
  /** Level of the coefficient intervals. Default 0.95. */
  confidenceLevel?: number;
}

export interface LeastSquaresResult {
  readonly coefficientNames: readonly string[];
  readonly coefficients: readonly number[];
  readonly standardErrors: readonly number[];
  readonly tStatistics: readonly number[];
  readonly pValues: readonly number[];
  /** Intervals b +/- t_{n-p} SE at `confidenceLevel`. */
  readonly lower: readonly number[];
  readonly upper: readonly number[];
  readonly confidenceLevel: number;
  /** sigma^2 (X'WX)^{-1}, p x p row-major. */
  readonly covariance: readonly number[];
  readonly residualStandardError: number;
  readonly residualDf: number;
  readonly n: number;
  /** Weighted R^2 about the weighted mean (meaningful when the design has an intercept). */
  readonly rSquared: number;
}

/**
 * Fits y on the columns of `design` by (weighted) least squares.
 * Input: full column rank, n > p rows, finite values, positive weights.
 * Returns coefficients with SEs, t tests on n - p df and intervals.
 * Throws ModelInputError for empty input, n <= p, non-finite values, non-positive weights or a
 * singular design (naming the dependent column).
 * Example: y = [1, 3, 2, 4] on [1, x] with x = [1, 2, 3, 4] gives slope 0.8 (SE 0.5164).
 */
export function fitWeightedLeastSquares(design: DesignMatrix, response: ArrayLike<number>, options: LeastSquaresOptions = {}): LeastSquaresResult {
  const { rows, columns, columnNames } = design;
  if (options.weights && options.weights.length !== rows) throw new ModelInputError(`weights have ${options.weights.length} values, design has ${rows} rows`);
  const confidenceLevel = options.confidenceLevel ?? 0.95;
  if (rows === 0) throw new ModelInputError("no observations to fit");
  if (response.length !== rows) throw new ModelInputError(`response has ${response.length} values, design has ${rows} rows`);
  if (rows <= columns) throw new ModelInputError(`${rows} observations leave no residual degrees of freedom for ${columns} coefficients; standard errors need n > p`);
  if (!(confidenceLevel > 0 && confidenceLevel < 1)) throw new ModelInputError(`confidence level must lie in (0, 1), got ${confidenceLevel}`);
  // Typed copies keep the shared cross-product loop monomorphic (fast) whatever the caller passes.
  const weights = options.weights ? Float64Array.from(options.weights) : new Float64Array(rows).fill(1);
  const y = Float64Array.from(response);
  for (let i = 0; i < rows; i += 1) {
    if (!Number.isFinite(response[i]!)) throw new ModelInputError(`response ${i + 1} is ${response[i]}`);
    if (!(weights[i]! > 0) || !Number.isFinite(weights[i]!)) throw new ModelInputError(`weight ${i + 1} is ${weights[i]}; weights must be positive and finite`);
    for (let j = 0; j < columns; j += 1) {
      const x = design.data[i * columns + j]!;
      if (!Number.isFinite(x)) throw new ModelInputError(`design value in row ${i + 1}, column ${columnNames[j]} is ${x}`);
    }
  }
  const { xtwx, xtwy } = weightedCrossProducts(design, weights, y);
  const factor = choleskyFactor(xtwx, columns);
  if (!factor.ok) throw new ModelInputError(`design column ${columnNames[factor.column]} is a linear combination of the columns before it (singular design)`);
  const coefficients = choleskySolve(factor.factor, xtwy);
  const fitted = designTimesVector(design, coefficients);
  let weightedRss = 0;
  let weightSum = 0;
  let weightedMean = 0;
  for (let i = 0; i < rows; i += 1) {
    weightedRss += weights[i]! * (response[i]! - fitted[i]!) ** 2;
    weightSum += weights[i]!;
    weightedMean += weights[i]! * response[i]!;
  }
  weightedMean /= weightSum;
  let weightedTss = 0;
  for (let i = 0; i < rows; i += 1) weightedTss += weights[i]! * (response[i]! - weightedMean) ** 2;
  const residualDf = rows - columns;
  const sigma2 = weightedRss / residualDf;
  const unscaled = choleskyInverse(factor.factor);
  const covariance = Array.from(unscaled, (value) => value * sigma2);
  const standardErrors = Array.from({ length: columns }, (_, j) => Math.sqrt(covariance[j * columns + j]!));
  const coefficientList = Array.from(coefficients);
  const tStatistics = coefficientList.map((value, j) => value / standardErrors[j]!);
  const critical = studentTQuantile(1 - (1 - confidenceLevel) / 2, residualDf);
  return Object.freeze({
    coefficientNames: columnNames,
    coefficients: coefficientList,
    standardErrors,
    tStatistics,
    pValues: tStatistics.map((t) => studentTTwoSidedP(t, residualDf)),
    lower: coefficientList.map((value, j) => value - critical * standardErrors[j]!),
    upper: coefficientList.map((value, j) => value + critical * standardErrors[j]!),
    confidenceLevel,
    covariance,
    residualStandardError: Math.sqrt(sigma2),
    residualDf,
    n: rows,
    rSquared: weightedTss > 0 ? 1 - weightedRss / weightedTss : NaN,
  });
}
