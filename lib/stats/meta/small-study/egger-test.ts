/**
 * Regression tests for funnel-plot asymmetry (small-study effects): Egger's test, and its
 * meta-regression form with the standard error as a moderator.
 *
 * References:
 * - Egger, M., Davey Smith, G., Schneider, M. & Minder, C. (1997). Bias in meta-analysis detected
 *   by a simple, graphical test. BMJ 315: 629-634.
 * - Sterne, J. A. C. & Egger, M. (2005). Regression methods to detect publication and other bias
 *   in meta-analysis. In Rothstein, H. R., Sutton, A. J. & Borenstein, M. (eds.), Publication
 *   Bias in Meta-Analysis. Wiley, ch. 6.
 *
 * Egger: the standard normal deviate y_i / SE_i regressed on the precision 1 / SE_i by ordinary
 * least squares, y_i / SE_i = a + b / SE_i + error; the intercept a measures asymmetry (t test on
 * k - 2 df), the slope b is the effect the regression line gives a study of infinite precision.
 * The same fit is the weighted regression y_i = b + a SE_i with weights 1 / v_i and a free
 * dispersion, i.e. the common-effect meta-regression on SE with Knapp-Hartung standard errors.
 * Meta-regression form: y_i = b0 + b1 SE_i + u_i + e_i, u_i ~ N(0, tau^2) estimated by the chosen
 * method and tested with the chosen test; b1 measures asymmetry.
 * Both are tests of small-study effects, of which publication bias is one possible cause.
 */
import { designMatrix } from "../../linear/design-matrix";
import { ModelInputError } from "../../model-error";
import { fitWeightedLeastSquares } from "../../regression/fit-weighted-least-squares";
import { fitMetaModel } from "../fit-meta-model";
import type { MetaData } from "../meta-data";
import type { CoefficientEstimate, MetaModelResult } from "../meta-result";
import { requireOneRowPerStudy, type SensitivityFitOptions } from "../sensitivity/subset-fit";

export interface RegressionCoefficient {
  readonly estimate: number;
  readonly standardError: number;
  /** t statistic on `df` degrees of freedom. */
  readonly statistic: number;
  readonly df: number;
  readonly pValue: number;
  readonly ciLower: number;
  readonly ciUpper: number;
}

export interface EggerTest {
  readonly available: true;
  readonly k: number;
  /** a: the asymmetry coefficient (0 for a symmetric funnel). */
  readonly intercept: RegressionCoefficient;
  /** b: the slope on precision. */
  readonly slope: RegressionCoefficient;
  readonly confidenceLevel: number;
  readonly description: string;
  readonly references: readonly string[];
}

export interface StandardErrorRegression {
  readonly available: true;
  /** The meta-regression y ~ SE with the chosen tau^2 method and test. */
  readonly fit: MetaModelResult;
  /** The coefficient of the standard error (the asymmetry test). */
  readonly standardErrorCoefficient: CoefficientEstimate;
  readonly description: string;
  readonly references: readonly string[];
}

const EGGER_REFERENCE = "Egger, M., Davey Smith, G., Schneider, M. & Minder, C. (1997). BMJ 315: 629-634.";
const STERNE_EGGER_REFERENCE = "Sterne, J. A. C. & Egger, M. (2005). In Publication Bias in Meta-Analysis (Rothstein, Sutton & Borenstein, eds.), Wiley, ch. 6.";

/**
 * Egger's regression test on `data`.
 * Constraints: k >= 3 studies without case weights; confidence level in (0, 1).
 * Returns intercept (asymmetry) and slope with SEs, t tests on k - 2 df and intervals.
 * Throws ModelInputError for fewer than three studies, case weights, a singular regression (all
 * standard errors equal) or an exact fit (no residual variation).
 * Example: eggerTest(data).intercept.pValue is Egger's test p-value.
 */
export function eggerTest(data: MetaData, confidenceLevel = 0.95): EggerTest {
  requireOneRowPerStudy(data, "Egger's test");
  const { k } = data;
  if (k < 3) throw new ModelInputError(`Egger's test regresses on the precision with k - 2 residual degrees of freedom, so it needs at least 3 studies (k = ${k})`);
  const rows = new Float64Array(2 * k);
  const deviates = new Float64Array(k);
  let allEqual = true;
  for (let i = 0; i < k; i += 1) {
    const se = Math.sqrt(data.variances[i]!);
    rows[2 * i] = 1;
    rows[2 * i + 1] = 1 / se;
    deviates[i] = data.estimates[i]! / se;
    if (data.variances[i] !== data.variances[0]) allEqual = false;
  }
  if (allEqual) throw new ModelInputError("Egger's test needs studies of different precision: every standard error is the same, so the regression on precision is singular");
  const fit = fitWeightedLeastSquares(designMatrix(k, ["intercept", "precision"], rows), deviates, { confidenceLevel });
  // Rounding leaves about 1e-16 of scatter on an exact line; anything that small is no scatter at all.
  let meanSquare = 0;
  for (let i = 0; i < k; i += 1) meanSquare += deviates[i]! ** 2 / k;
  if (!(fit.residualStandardError > 1e-10 * Math.sqrt(meanSquare))) throw new ModelInputError("Egger's test is undefined here: the standard normal deviates lie exactly on a line in the precision, leaving no residual variation to test against");
  const coefficient = (j: number): RegressionCoefficient => ({
    estimate: fit.coefficients[j]!,
    standardError: fit.standardErrors[j]!,
    statistic: fit.tStatistics[j]!,
    df: fit.residualDf,
    pValue: fit.pValues[j]!,
    ciLower: fit.lower[j]!,
    ciUpper: fit.upper[j]!,
  });
  return Object.freeze({
    available: true as const,
    k,
    intercept: coefficient(0),
    slope: coefficient(1),
    confidenceLevel,
    description: "Ordinary least-squares regression of y_i / SE_i on 1 / SE_i; the intercept measures funnel asymmetry (t test on k - 2 df).",
    references: [EGGER_REFERENCE],
  });
}

/**
 * The meta-regression of the estimates on their standard errors with `options` (method, test,
 * level; any design in `options` is ignored: the design is [intercept, standard_error]).
 * Constraints: k >= 3 studies without case weights, not all standard errors equal.
 * Returns the fit and the coefficient of the standard error.
 * Throws ModelInputError as fitMetaModel does, or for case weights.
 * Example: standardErrorRegression(data, { method: "fe", test: "hksj" }) reproduces Egger's test
 * (the SE coefficient equals eggerTest(data).intercept).
 */
export function standardErrorRegression(data: MetaData, options: SensitivityFitOptions = {}): StandardErrorRegression {
  requireOneRowPerStudy(data, "the regression on the standard error");
  const { k } = data;
  const rows = new Float64Array(2 * k);
  for (let i = 0; i < k; i += 1) {
    rows[2 * i] = 1;
    rows[2 * i + 1] = Math.sqrt(data.variances[i]!);
  }
  const fit = fitMetaModel(data, { ...options, design: designMatrix(k, ["intercept", "standard_error"], rows) });
  return Object.freeze({
    available: true as const,
    fit,
    standardErrorCoefficient: fit.coefficients[1]!,
    description: "Meta-regression y_i = b0 + b1 SE_i (+ u_i, tau^2 by the chosen method), weights 1 / (v_i + tau^2); b1 measures funnel asymmetry.",
    references: [STERNE_EGGER_REFERENCE],
  });
}
