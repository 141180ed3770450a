import type { StatWarning } from "../warnings";

/** How the coefficients were obtained: the plain likelihood, or Firth's penalised likelihood. */
export type GlmEstimator = "maximum_likelihood" | "firth_penalised";

/** Standard errors from the Fisher information alone ("fixed", dispersion 1) or scaled by Pearson's chi-square / (n - p) (quasi-likelihood). */
export type DispersionMethod = "fixed" | "pearson";

export interface SeparationDiagnosis {
  /** "complete": every observation is predicted perfectly in the limit; "quasi_complete": some are. */
  readonly kind: "none" | "complete" | "quasi_complete";
  /** Observations whose fitted mean is at the edge (0 or 1; 0 for counts) once the coefficients diverge. */
  readonly boundaryObservations: number;
  /** Coefficients that keep moving along the direction of divergence (empty when kind is "none"). */
  readonly divergingCoefficients: readonly string[];
}

/**
 * One fitted generalised linear model. Arrays follow `coefficientNames`. A Wald quantity that does
 * not exist (no maximum-likelihood estimate under separation, a singular information matrix, a
 * statistic over a standard error of 0) is null, and a "wald_unavailable" warning says which and why.
 */
export interface GlmResult {
  readonly family: "binomial" | "poisson";
  readonly link: "logit" | "log";
  readonly estimator: GlmEstimator;
  readonly coefficientNames: readonly string[];
  readonly coefficients: readonly number[];
  readonly standardErrors: readonly (number | null)[];
  /** Wald statistics: z when the dispersion is fixed, t (on residualDf) when it is estimated. */
  readonly statistics: readonly (number | null)[];
  readonly statisticName: "z" | "t";
  readonly pValues: readonly (number | null)[];
  /** Covariance of the coefficients (inverse Fisher information times the dispersion), p x p row-major. */
  readonly covariance: readonly (number | null)[];
  readonly dispersion: number;
  readonly dispersionMethod: DispersionMethod;
  readonly pearsonChiSquare: number;
  readonly deviance: number;
  readonly nullDeviance: number;
  readonly residualDf: number;
  readonly nullDf: number;
  /** Null for a quasi-likelihood fit (dispersion "pearson"), which has no likelihood. */
  readonly logLikelihood: number | null;
  readonly aic: number | null;
  /** Firth fits: log-likelihood + 0.5 log det(information). */
  readonly penalisedLogLikelihood: number | null;
  readonly n: number;
  readonly converged: boolean;
  readonly iterations: number;
  readonly stepHalvings: number;
  readonly separation: SeparationDiagnosis;
  readonly warnings: readonly StatWarning[];
}

/**
 * The estimate and standard error of one named coefficient, for reporting: an estimate is never
 * reported without its standard error.
 * Throws Error when the model has no such coefficient, or when its standard error is unavailable
 * (the message gives the fit's reason); callers refuse such fits before asking.
 */
export function coefficientOf(result: GlmResult, name: string): { estimate: number; standardError: number } {
  const index = result.coefficientNames.indexOf(name);
  if (index < 0) throw new Error(`the model has no coefficient ${name} (it has ${result.coefficientNames.join(", ")})`);
  const standardError = result.standardErrors[index]!;
  if (standardError === null) {
    const why = result.warnings.find((w) => w.code === "wald_unavailable")?.message ?? "no reason recorded";
    throw new Error(`the standard error of ${name} is unavailable, so its estimate cannot be reported (${why})`);
  }
  return { estimate: result.coefficients[index]!, standardError };
}
