/**
 * Profile-likelihood confidence intervals for one variance component of a multilevel model, the
 * likelihood-ratio test of that component against 0, and inverse observed-information standard
 * errors.
 *
 * References:
 * - Cox, D. R. & Hinkley, D. V. (1974). Theoretical Statistics. Chapman & Hall, section 9.3
 *   (intervals from the likelihood-ratio statistic).
 * - Hardy, R. J. & Thompson, S. G. (1996). A likelihood approach to meta-analysis with random
 *   effects. Statistics in Medicine 15: 619-629 (profile-likelihood intervals for tau^2).
 * - Self, S. G. & Liang, K.-Y. (1987). Asymptotic properties of maximum likelihood estimators and
 *   likelihood ratio tests under nonstandard conditions. Journal of the American Statistical
 *   Association 82: 605-610.
 * - Stram, D. O. & Lee, J. W. (1994). Variance components testing in the longitudinal mixed effects
 *   model. Biometrics 50: 1171-1177 (one variance component at 0: the 50:50 mixture of chi2_0 and
 *   chi2_1).
 *
 * Profile: l_p(x) = max over the other components (>= 0) of l with sigma2_l = x. The interval is
 * {x >= 0 : 2 (l_max - l_p(x)) <= chi2_1 quantile c at the confidence level}. Its limits solve
 * l_p(x) = l_max - c / 2 by Newton's method on the signed root of the deviance in log x, started
 * at the Wald limits and safeguarded by bisection, with dl_p/dx the score of component l at the
 * inner maximum (envelope theorem). The lower limit is 0 when l_p(0) is at or
 * above the cut-off.
 *
 * Test of sigma2_l = 0: T = 2 (l_max - l_p(0)). sigma2_l = 0 lies on the boundary of the parameter
 * space, so under the null T is not chi2_1 but a 50:50 mixture of a point mass at 0 and chi2_1
 * (Self & Liang 1987, case 5; Stram & Lee 1994): p = P(chi2_1 >= T) / 2 for T > 0, 1 for T = 0.
 * Under REML the two models have the same fixed effects, as the restricted likelihood requires.
 */
import { chiSquareQuantile, chiSquareUpperP } from "../../distributions/chi-square";
import { choleskyFactor, choleskyInverse } from "../../linear/cholesky";
import type { IterationControl } from "../tau2-estimate";
import { WITH_SCORE, type LikelihoodKind, type NestedLikelihood } from "./nested-likelihood";
import { maximiseLikelihood } from "./variance-components-estimate";

const MAX_EXPANSIONS = 60;

/** How the p-value of a variance component's likelihood-ratio test is obtained. */
export const BOUNDARY_TEST_DESCRIPTION =
  "likelihood-ratio test of the model against the same model without this level (its variance at 0); 0 is on the boundary, so the p-value is from the 50:50 mixture of chi2_0 and chi2_1 (Self & Liang 1987; Stram & Lee 1994), i.e. half the chi2_1 upper tail";

export const PROFILE_DESCRIPTION =
  "profile likelihood: the values of this variance at which twice the drop of the (restricted) log-likelihood, maximised over the other variances, equals the chi2_1 quantile; the lower limit is 0 when the profile at 0 is above the cut-off";

export interface ProfileLimits {
  readonly lower: number;
  /** Infinity when the profile does not fall below the cut-off (then `converged` is false). */
  readonly upper: number;
  readonly lowerAtZero: boolean;
  readonly converged: boolean;
  /** l_p(0): the maximised likelihood with this component at 0. */
  readonly logLikelihoodAtZero: number;
  /** Whether the inner fit behind logLikelihoodAtZero converged. */
  readonly zeroConverged: boolean;
  /** Why a limit is missing, when one is. */
  readonly failure: string | null;
}

export interface BoundaryTest {
  readonly statistic: number;
  /** The mixture p-value (see the module comment). */
  readonly pValue: number;
  /** The naive chi2_1 p-value, twice the reported one (for comparison only). */
  readonly naivePValue: number;
}

/** The 50:50 mixture test from the two maximised log-likelihoods. Example: statistic 3.84 gives p = 0.025. */
export function boundaryTest(logLikelihoodFull: number, logLikelihoodReduced: number): BoundaryTest {
  const statistic = Math.max(0, 2 * (logLikelihoodFull - logLikelihoodReduced));
  const naivePValue = statistic > 0 ? chiSquareUpperP(statistic, 1) : 1;
  return { statistic, pValue: statistic > 0 ? naivePValue / 2 : 1, naivePValue };
}

interface ProfilePoint {
  readonly x: number;
  readonly value: number;
  readonly slope: number;
  readonly others: Float64Array;
  readonly converged: boolean;
}

/**
 * The profile-likelihood limits of component `index`.
 * Input: the workspace, the maximum `estimate` (all components) with its log-likelihood, level in
 * (0, 1), and `scale`, the component's standard error when known (else a typical size of it):
 * the first trial limits are estimate -/+ z scale. Returns the limits with flags; leaves the
 * workspace at some evaluation.
 * Example: for a single level this is the profile interval of tau^2 (Hardy & Thompson 1996).
 */
export function profileLimits(
  work: NestedLikelihood,
  kind: LikelihoodKind,
  estimate: Float64Array,
  maximum: number,
  index: number,
  level: number,
  scale: number,
  control: IterationControl,
): ProfileLimits {
  const criticalSquare = chiSquareQuantile(level, 1);
  const cut = maximum - criticalSquare / 2;
  // The profile's error is quadratic in the inner step tolerance, so a looser one suffices.
  const inner: IterationControl = { maxIterations: control.maxIterations, tolerance: Math.max(control.tolerance, 1e-8) };
  const rootTolerance = Math.max(control.tolerance, 1e-9);
  const centreValue = estimate[index]!;
  let warm = Float64Array.from(estimate);
  const profile = (x: number): ProfilePoint => {
    const fit = maximiseLikelihood(work, kind, warm, inner, { index, value: x });
    warm = Float64Array.from(fit.sigma2);
    return { x, value: fit.logLikelihood - cut, slope: fit.score[index]!, others: fit.sigma2, converged: fit.converged };
  };
  const centre: ProfilePoint = { x: centreValue, value: criticalSquare / 2, slope: 0, others: estimate, converged: true };
  let failure: string | null = null;

  // Newton's method on the signed root r = sign(x - estimate) sqrt(2 (l_max - l_p(x))) as a function
  // of t = log x (r is close to linear in t; the target is -/+ z), from `from`, kept inside the
  // bracket of `inside` (f > 0) and `outside` (f < 0) by bisection.
  const solve = (insidePoint: ProfilePoint, outsidePoint: ProfilePoint, from: ProfilePoint, side: -1 | 1): { x: number; converged: boolean } => {
    let inside = insidePoint;
    let outside = outsidePoint;
    let point = from;
    const target = side * Math.sqrt(criticalSquare);
    for (let iteration = 0; iteration < control.maxIterations; iteration += 1) {
      const low = Math.min(inside.x, outside.x);
      const high = Math.max(inside.x, outside.x);
      const deviance = criticalSquare - 2 * point.value;
      const root = side * Math.sqrt(Math.max(deviance, 0));
      const rootSlope = deviance > 0 ? (-side * point.slope) / Math.sqrt(deviance) : Number.NaN;
      const logStep = point.x > 0 && rootSlope !== 0 ? -(root - target) / (point.x * rootSlope) : Number.NaN;
      let next = Number.isFinite(logStep) ? point.x * Math.exp(Math.max(-2, Math.min(2, logStep))) : Number.NaN;
      if (!(next > low && next < high)) next = 0.5 * (low + high);
      const tolerance = rootTolerance * next;
      if (Math.abs(next - point.x) <= tolerance || high - low <= tolerance) return { x: next, converged: inside.converged && outside.converged };
      point = profile(next);
      if (!point.converged) return { x: next, converged: false };
      if (point.value === 0) return { x: next, converged: true };
      if (point.value > 0) inside = point;
      else outside = point;
    }
    return { x: point.x, converged: false };
  };
  const wald = Math.sqrt(criticalSquare) * scale;

  // Lower limit, and l_p(0) for the test of this component.
  let lower = 0;
  let lowerAtZero = true;
  let lowerConverged = true;
  let logLikelihoodAtZero = maximum;
  let zeroConverged = true;
  if (centreValue > 0) {
    const atZero = profile(0);
    logLikelihoodAtZero = atZero.value + cut;
    zeroConverged = atZero.converged;
    lowerConverged = atZero.converged;
    if (atZero.converged && atZero.value < 0) {
      lowerAtZero = false;
      warm = Float64Array.from(estimate);
      const first = profile(centreValue - wald > 0.05 * centreValue ? centreValue - wald : 0.5 * centreValue);
      const root = !first.converged ? { x: first.x, converged: false } : first.value > 0 ? solve(first, atZero, first, -1) : solve(centre, first, first, -1);
      lower = root.x;
      lowerConverged = root.converged;
    }
    if (!lowerConverged) failure = "the lower profile limit did not converge";
  }

  // Upper limit: from the Wald point, doubling the distance until the profile falls below the cut.
  warm = Float64Array.from(estimate);
  let inside = centre;
  let width = wald > 0 ? wald : Math.max(scale, centreValue, 1e-12);
  let outside: ProfilePoint | null = null;
  for (let expansion = 0; expansion < MAX_EXPANSIONS; expansion += 1) {
    const trial = profile(centreValue + width);
    if (!trial.converged) break;
    if (trial.value < 0) {
      outside = trial;
      break;
    }
    inside = trial;
    width *= 2;
  }
  let upper = Number.POSITIVE_INFINITY;
  let upperConverged = false;
  if (outside === null) {
    failure = failure ?? "the profile likelihood does not fall below the cut-off as this variance grows (no finite upper limit)";
  } else {
    const from = inside === centre || Math.abs(outside.value) < Math.abs(inside.value) ? outside : inside;
    warm = Float64Array.from(from.others);
    const root = solve(inside, outside, from, 1);
    upper = root.x;
    upperConverged = root.converged;
    if (!upperConverged) failure = failure ?? "the upper profile limit did not converge";
  }
  return { lower, upper, lowerAtZero, converged: lowerConverged && upperConverged, logLikelihoodAtZero, zeroConverged, failure };
}

/**
 * The maximised likelihood with component `index` at 0 (the model without that level).
 * Example: with one level this is the common-effect model's (restricted) log-likelihood.
 */
export function logLikelihoodWithout(work: NestedLikelihood, kind: LikelihoodKind, estimate: Float64Array, index: number, control: IterationControl): { logLikelihood: number; converged: boolean } {
  const fit = maximiseLikelihood(work, kind, estimate, control, { index, value: 0 });
  return { logLikelihood: fit.logLikelihood, converged: fit.converged };
}

/**
 * Standard errors of the interior components from the inverse observed information, the negative
 * Hessian of the (restricted) log-likelihood by central differences of the analytic score
 * (step 1e-4 sigma2_l). Components at 0 get null, as does every component when the information of
 * the interior ones is not positive definite. Leaves the workspace at some evaluation.
 */
export function observedInformationStandardErrors(work: NestedLikelihood, kind: LikelihoodKind, estimate: Float64Array): (number | null)[] {
  const depth = work.depth;
  const interior = Array.from({ length: depth }, (_, l) => l).filter((l) => estimate[l]! > 0);
  const result: (number | null)[] = new Array<number | null>(depth).fill(null);
  if (interior.length === 0) return result;
  const size = interior.length;
  const information = new Float64Array(size * size);
  const point = new Float64Array(depth);
  interior.forEach((m, b) => {
    const step = 1e-4 * estimate[m]!;
    point.set(estimate);
    point[m] = estimate[m]! + step;
    work.evaluate(point, kind, WITH_SCORE);
    const plus = Float64Array.from(work.score);
    point[m] = estimate[m]! - step;
    work.evaluate(point, kind, WITH_SCORE);
    interior.forEach((l, a) => (information[a * size + b] = -(plus[l]! - work.score[l]!) / (2 * step)));
  });
  for (let a = 0; a < size; a += 1) {
    for (let b = 0; b < a; b += 1) {
      const mean = 0.5 * (information[a * size + b]! + information[b * size + a]!);
      information[a * size + b] = mean;
      information[b * size + a] = mean;
    }
  }
  const outcome = choleskyFactor(information, size, 1e-12);
  if (!outcome.ok) return result;
  const inverse = choleskyInverse(outcome.factor);
  interior.forEach((l, a) => (result[l] = Math.sqrt(inverse[a * size + a]!)));
  return result;
}
