/**
 * Wald inference for GLM coefficients: standard errors from the diagonal of the covariance
 * (inverse information times the dispersion), z or t statistics b / SE, and two-sided p-values.
 *
 * References:
 * - Wald, A. (1943). Tests of statistical hypotheses concerning several parameters when the number
 *   of observations is large. Transactions of the American Mathematical Society 54: 426-482.
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed., section 2.5.
 *
 * Where these quantities do not exist they are null, never NaN, and a "wald_unavailable" warning
 * names them and says why: with no covariance at all (the information matrix is singular, or no
 * maximum-likelihood estimate exists), and for the statistic and p-value of a coefficient whose
 * standard error is 0.
 */
import { normalTwoSidedP } from "../distributions/normal";
import { studentTTwoSidedP } from "../distributions/student-t";
import { warning, type StatWarning } from "../warnings";

export interface WaldInference {
  readonly standardErrors: readonly (number | null)[];
  readonly statistics: readonly (number | null)[];
  readonly pValues: readonly (number | null)[];
  /** p x p row-major; every entry null when the covariance does not exist. */
  readonly covariance: readonly (number | null)[];
  /** One "wald_unavailable" warning when something is null, else none. */
  readonly warnings: readonly StatWarning[];
}

/**
 * Wald quantities of `coefficients` from `covariance` (p x p row-major), or all of them null with
 * `unavailableBecause` as the warning's reason when `covariance` is null. `statisticName` "t" takes
 * p-values from Student's t on `residualDf` degrees of freedom, "z" from the standard normal.
 * Example: coefficients [2], covariance [0.25] give SE [0.5], z [4], p [6.33e-5].
 */
export function waldInference(
  coefficientNames: readonly string[],
  coefficients: readonly number[],
  covariance: Float64Array | null,
  statisticName: "z" | "t",
  residualDf: number,
  unavailableBecause: string,
): WaldInference {
  const columns = coefficients.length;
  if (!covariance) {
    const none = (count: number) => new Array<null>(count).fill(null);
    return {
      standardErrors: none(columns),
      statistics: none(columns),
      pValues: none(columns),
      covariance: none(columns * columns),
      warnings: [warning("wald_unavailable", `standard errors, Wald ${statisticName} statistics, p-values and the covariance matrix are unavailable: ${unavailableBecause}`)],
    };
  }
  const standardErrors = coefficients.map((_, j) => Math.sqrt(covariance[j * columns + j]!));
  const testable = standardErrors.map((se) => se > 0 && Number.isFinite(se));
  const statistics = coefficients.map((value, j) => (testable[j] ? value / standardErrors[j]! : null));
  const pValues = statistics.map((statistic) => (statistic === null ? null : statisticName === "t" ? studentTTwoSidedP(statistic, residualDf) : normalTwoSidedP(statistic)));
  const untestable = coefficientNames.filter((_, j) => !testable[j]);
  const warnings = untestable.length
    ? [warning("wald_unavailable", `Wald ${statisticName} statistics and p-values are unavailable for ${untestable.join(", ")}: the standard error is 0`)]
    : [];
  return { standardErrors, statistics, pValues, covariance: Array.from(covariance), warnings };
}
