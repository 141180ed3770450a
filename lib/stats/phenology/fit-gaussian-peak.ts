/**
 * The date of the caterpillar food peak from a frass-fall series: a Gaussian curve
 *   frass(t) = height * exp(-(t - peak)^2 / (2 width^2))
 * fitted by nonlinear least squares with the Levenberg-Marquardt algorithm; standard errors from
 * the Gauss-Newton approximation sigma^2 (J'J)^{-1}, sigma^2 = RSS / (n - 3), as nls in R reports.
 *
 * References:
 * - Levenberg, K. (1944). A method for the solution of certain non-linear problems in least
 *   squares. Quarterly of Applied Mathematics 2: 164-168.
 * - Marquardt, D. W. (1963). An algorithm for least-squares estimation of nonlinear parameters.
 *   Journal of the Society for Industrial and Applied Mathematics 11: 431-441.
 * - Bates, D. M. & Watts, D. G. (1988). Nonlinear Regression Analysis and Its Applications.
 *   Wiley, ch. 2 (standard errors).
 * - Visser, M. E., Holleman, L. J. M. & Gienapp, P. (2006). Shifts in caterpillar biomass
 *   phenology due to climate change and its impact on the breeding biology of an insectivorous
 *   bird. Oecologia 147: 164-172. (the food peak from frass fall)
 */
import { choleskyFactor, choleskyInverse, choleskySolve } from "../linear/cholesky";
import { ModelInputError } from "../model-error";
import { warning, type StatWarning } from "../warnings";

export interface GaussianPeakOptions {
  /** Levenberg-Marquardt iterations at most. Default 200. */
  maxIterations?: number;
  /** Converged when the relative RSS reduction and every relative parameter step are below this. Default 1e-12. */
  tolerance?: number;
  /** Plausible width (SD of the curve, days): outside it the fit is flagged. Default [1, 45], our rule of thumb. */
  plausibleWidth?: readonly [number, number];
}

export interface GaussianPeakParameter {
  readonly estimate: number;
  readonly standardError: number;
}

export interface GaussianPeakResult {
  readonly height: GaussianPeakParameter;
  readonly peakDate: GaussianPeakParameter;
  /** The curve's SD in days (always reported positive). */
  readonly width: GaussianPeakParameter;
  readonly residualSumOfSquares: number;
  readonly residualStandardError: number;
  readonly residualDf: number;
  readonly n: number;
  readonly firstDate: number;
  readonly lastDate: number;
  readonly converged: boolean;
  readonly iterations: number;
  /** False when the peak lies outside the sampled dates or the width is implausible (see warnings). */
  readonly plausible: boolean;
  readonly warnings: readonly StatWarning[];
}

function residualSum(dates: ArrayLike<number>, values: ArrayLike<number>, height: number, peak: number, width: number): number {
  let sum = 0;
  for (let i = 0; i < dates.length; i += 1) {
    const d = dates[i]! - peak;
    sum += (values[i]! - height * Math.exp((-d * d) / (2 * width * width))) ** 2;
  }
  return sum;
}

/** J'J (3 x 3) and J'r at the parameters, J the Jacobian of the curve. */
function normalEquations(dates: ArrayLike<number>, values: ArrayLike<number>, height: number, peak: number, width: number) {
  const jtj = new Float64Array(9);
  const jtr = new Float64Array(3);
  const gradient = new Float64Array(3);
  for (let i = 0; i < dates.length; i += 1) {
    const d = dates[i]! - peak;
    const e = Math.exp((-d * d) / (2 * width * width));
    const fitted = height * e;
    gradient[0] = e;
    gradient[1] = (fitted * d) / (width * width);
    gradient[2] = (fitted * d * d) / (width * width * width);
    const r = values[i]! - fitted;
    for (let a = 0; a < 3; a += 1) {
      jtr[a] += gradient[a]! * r;
      for (let b = 0; b < 3; b += 1) jtj[a * 3 + b] += gradient[a]! * gradient[b]!;
    }
  }
  return { jtj, jtr };
}

/**
 * Fits the Gaussian food-peak curve to (date, frass) observations, one per trap and day or one
 * mean per day.
 * Input: equal-length finite arrays, at least 4 observations on at least 3 distinct dates, frass
 * >= 0 with some frass > 0.
 * Returns height, peak date and width with SEs, fit information and plausibility flags
 * (implausible_fit warnings); a fit that did not converge has converged = false and a warning.
 * Throws ModelInputError for input that cannot be fitted.
 * Example: fitGaussianPeak(days, frassPerTrapPerDay).peakDate.estimate is the food-peak day of year.
 */
export function fitGaussianPeak(dates: ArrayLike<number>, values: ArrayLike<number>, options: GaussianPeakOptions = {}): GaussianPeakResult {
  const maxIterations = options.maxIterations ?? 200;
  const tolerance = options.tolerance ?? 1e-12;
  const [minWidth, maxWidth] = options.plausibleWidth ?? [1, 45];
  const n = dates.length;
  if (values.length !== n) throw new ModelInputError(`dates have ${n} values, frass has ${values.length}`);
  if (n < 4) throw new ModelInputError(`a Gaussian peak has 3 parameters; ${n} observations leave no residual degrees of freedom (need at least 4)`);
  for (let i = 0; i < n; i += 1) {
    if (!Number.isFinite(dates[i]!)) throw new ModelInputError(`date ${i + 1} is ${dates[i]}`);
    if (!Number.isFinite(values[i]!) || values[i]! < 0) throw new ModelInputError(`frass value ${i + 1} is ${values[i]}; frass must be finite and >= 0`);
  }
  if (new Set(Array.from(dates)).size < 3) throw new ModelInputError("a Gaussian peak needs frass on at least 3 distinct dates");
  let total = 0;
  let firstDate = Infinity;
  let lastDate = -Infinity;
  let maxIndex = 0;
  for (let i = 0; i < n; i += 1) {
    total += values[i]!;
    firstDate = Math.min(firstDate, dates[i]!);
    lastDate = Math.max(lastDate, dates[i]!);
    if (values[i]! > values[maxIndex]!) maxIndex = i;
  }
  if (!(total > 0)) throw new ModelInputError("every frass value is 0: there is no peak to fit");

  // Start: peak at the frass-weighted mean date, width from the frass-weighted spread, height at the top.
  let peak = 0;
  for (let i = 0; i < n; i += 1) peak += (values[i]! * dates[i]!) / total;
  let spread = 0;
  for (let i = 0; i < n; i += 1) spread += (values[i]! * (dates[i]! - peak) ** 2) / total;
  let width = Math.max(Math.sqrt(spread), 0.5);
  let height = values[maxIndex]!;
  let rss = residualSum(dates, values, height, peak, width);
  let lambda = 1e-3;
  let converged = false;
  let iterations = 0;
  for (iterations = 1; iterations <= maxIterations; iterations += 1) {
    const { jtj, jtr } = normalEquations(dates, values, height, peak, width);
    let accepted = false;
    let relativeStep = Infinity;
    let relativeReduction = Infinity;
    while (!accepted && lambda < 1e16) {
      const damped = Float64Array.from(jtj);
      for (let a = 0; a < 3; a += 1) damped[a * 3 + a] = jtj[a * 3 + a]! * (1 + lambda);
      const factor = choleskyFactor(damped, 3, 1e-15);
      if (!factor.ok) {
        lambda *= 10;
        continue;
      }
      const step = choleskySolve(factor.factor, jtr);
      const nextHeight = height + step[0]!;
      const nextPeak = peak + step[1]!;
      const nextWidth = width + step[2]!;
      const nextRss = residualSum(dates, values, nextHeight, nextPeak, nextWidth);
      if (Number.isFinite(nextRss) && nextRss <= rss) {
        relativeReduction = (rss - nextRss) / Math.max(rss, Number.MIN_VALUE);
        relativeStep = Math.max(
          Math.abs(step[0]!) / (Math.abs(height) + 1e-8),
          Math.abs(step[1]!) / (Math.abs(peak) + 1),
          Math.abs(step[2]!) / (Math.abs(width) + 1e-8),
        );
        height = nextHeight;
        peak = nextPeak;
        width = nextWidth;
        rss = nextRss;
        lambda = Math.max(lambda / 10, 1e-12);
        accepted = true;
      } else {
        lambda *= 10;
      }
    }
    // No step lowers the RSS even with huge damping: the point is stationary to working precision.
    if (!accepted || rss === 0 || (relativeReduction < tolerance && relativeStep < Math.sqrt(tolerance))) {
      converged = true;
      break;
    }
  }
  iterations = Math.min(iterations, maxIterations);
  width = Math.abs(width);
  const warnings: StatWarning[] = [];
  const residualDf = n - 3;
  const sigma2 = rss / residualDf;
  const { jtj } = normalEquations(dates, values, height, peak, width);
  const factor = choleskyFactor(jtj, 3, 1e-14);
  let standardErrors = [NaN, NaN, NaN];
  if (factor.ok) {
    const inverse = choleskyInverse(factor.factor);
    standardErrors = [0, 1, 2].map((j) => Math.sqrt(sigma2 * inverse[j * 3 + j]!));
  } else {
    converged = false;
    warnings.push(warning("ill_conditioned_design", "the curve's parameters are not identified at the fitted values (singular J'J); no standard errors"));
  }
  if (!converged) warnings.push(warning("non_convergence", `Levenberg-Marquardt did not converge within ${maxIterations} iterations`));
  let plausible = true;
  if (peak < firstDate || peak > lastDate) {
    plausible = false;
    warnings.push(warning("implausible_fit", `fitted peak on day ${peak.toFixed(1)} lies outside the sampled dates ${firstDate}-${lastDate}`));
  }
  if (width < minWidth || width > maxWidth) {
    plausible = false;
    warnings.push(warning("implausible_fit", `fitted width (SD) ${width.toFixed(2)} days is outside the plausible range ${minWidth}-${maxWidth} days`));
  }
  if (height <= 0) {
    plausible = false;
    warnings.push(warning("implausible_fit", `fitted height ${height} is not positive`));
  }
  return Object.freeze({
    height: { estimate: height, standardError: standardErrors[0]! },
    peakDate: { estimate: peak, standardError: standardErrors[1]! },
    width: { estimate: width, standardError: standardErrors[2]! },
    residualSumOfSquares: rss,
    residualStandardError: Math.sqrt(sigma2),
    residualDf,
    n,
    firstDate,
    lastDate,
    converged,
    iterations,
    plausible,
    warnings,
  });
}
