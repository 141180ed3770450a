/**
 * The parts of a MetaModelResult that only a multilevel fit has: one variance component per
 * level with its profile-likelihood interval, per-level I^2 and boundary likelihood-ratio test, and
 * the information criteria. Read by the CLI, the JSON shape and the comparison of two fits.
 *
 * References (the methods are in the files that compute them):
 * - Nakagawa, S. & Santos, E. S. A. (2012). Methodological issues and advances in biological
 *   meta-analysis. Evolutionary Ecology 26: 1253-1274 (per-level I^2).
 * - Cheung, M. W.-L. (2014). Modeling dependent effect sizes with three-level meta-analyses: a
 *   structural equation modeling approach. Psychological Methods 19: 211-229.
 */
import type { Unavailable } from "../meta-result";

export interface VarianceComponentInterval {
  readonly available: true;
  readonly method: "profile-likelihood";
  readonly description: string;
  readonly level: number;
  readonly lower: number;
  readonly upper: number;
  /** The profile at sigma2 = 0 is above the cut-off: the interval starts at 0. */
  readonly lowerAtZero: boolean;
}

export interface LevelTest {
  readonly available: true;
  /** 2 (l_full - l_without this level). */
  readonly statistic: number;
  /** From the 50:50 mixture of chi2_0 and chi2_1 (the reported p-value). */
  readonly pValue: number;
  /** chi2_1 upper tail, for comparison only (twice pValue when the statistic is positive). */
  readonly naivePValue: number;
  readonly distribution: "50:50 mixture of chi2_0 and chi2_1";
  readonly description: string;
}

export interface VarianceComponent {
  /** Level name (the grouping column), e.g. "site". */
  readonly level: string;
  /** Number of groups at this level. */
  readonly groups: number;
  readonly sigma2: number;
  readonly sigma: number;
  /** Inverse observed-information standard error; null at the boundary 0 or when the information is singular. */
  readonly standardError: number | null;
  readonly interval: VarianceComponentInterval | Unavailable;
  /** Per-level I^2 in percent: 100 sigma2_l / (sum of sigma2 + typical within-study variance). */
  readonly i2: number;
  /** sigma2 = 0, the boundary of its range. */
  readonly atBoundary: boolean;
  readonly test: LevelTest | Unavailable;
}

export interface InformationCriteria {
  /** Fixed coefficients plus variance components: p + L. */
  readonly parameters: number;
  /** The n of BIC: k for ML, k - p (the number of error contrasts) for REML. */
  readonly n: number;
  readonly aic: number;
  readonly bic: number;
  readonly description: string;
}

export interface MultilevelSummary {
  /** Outermost first. */
  readonly components: readonly VarianceComponent[];
  readonly totalSigma2: number;
  /** 100 sum sigma2 / (sum sigma2 + typical within-study variance). */
  readonly totalI2: number;
  readonly typicalWithinStudyVariance: number;
  readonly i2Description: string;
  readonly informationCriteria: InformationCriteria;
  /** What the optimiser did (iterations, convergence) in words. */
  readonly estimationDescription: string;
}
