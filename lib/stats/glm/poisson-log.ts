import type { GlmFamily } from "./glm-family";

/**
 * Count response (0, 1, 2, ...) with the log link: log(mu) = eta.
 *
 * References:
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed., ch. 6.
 */
const logFactorials: number[] = [0];
const logarithms: number[] = [-Infinity];

/** log(y!) for a whole number y, from a table grown on demand (exact sums of logs). */
function logFactorial(y: number): number {
  for (let k = logFactorials.length; k <= y; k += 1) logFactorials.push(logFactorials[k - 1]! + Math.log(k));
  return logFactorials[y]!;
}

/** Counts below this have their logarithm tabulated. */
const TABULATED_COUNTS = 4096;

/** log(y) for a whole number y; small counts repeat, so theirs come from a table grown on demand. */
function logOfCount(y: number): number {
  if (y >= TABULATED_COUNTS) return Math.log(y);
  for (let k = logarithms.length; k <= y; k += 1) logarithms.push(Math.log(k));
  return logarithms[y]!;
}

/** The floor on fitted means: keeps the working response finite when a mean tends to 0. */
const MEAN_FLOOR = 2.220446049250313e-16;
const LOG_MEAN_FLOOR = Math.log(MEAN_FLOOR);

export const poissonLog: GlmFamily = {
  name: "poisson",
  link: "log",
  invalidResponse(response) {
    for (let i = 0; i < response.length; i += 1) {
      const y = response[i]!;
      if (!Number.isInteger(y) || y < 0) return `response ${i + 1} is ${y}; a count must be a whole number >= 0`;
    }
    return null;
  },
  initialMean(response, mean) {
    for (let i = 0; i < response.length; i += 1) mean[i] = response[i]! + 0.1;
  },
  linkOf(mean) {
    return Math.log(mean);
  },
  meanOf(linearPredictor, mean) {
    for (let i = 0; i < linearPredictor.length; i += 1) mean[i] = Math.max(Math.exp(linearPredictor[i]!), MEAN_FLOOR);
  },
  meanAndDeviance(response, linearPredictor, mean) {
    // log(mu) is eta itself unless the floor applies: y log(y / mu) = y (log y - log mu). NaN stays NaN.
    let sum = 0;
    for (let i = 0; i < linearPredictor.length; i += 1) {
      const eta = linearPredictor[i]!;
      let mu = Math.exp(eta);
      let logMu = eta;
      if (mu < MEAN_FLOOR) {
        mu = MEAN_FLOOR;
        logMu = LOG_MEAN_FLOOR;
      }
      mean[i] = mu;
      const y = response[i]!;
      sum += (y > 0 ? y * (logOfCount(y) - logMu) : 0) - (y - mu);
    }
    return 2 * sum;
  },
  workingWeightsAndResponse(linearPredictor, mean, response, weights, working) {
    for (let i = 0; i < mean.length; i += 1) {
      const mu = mean[i]!;
      weights[i] = mu;
      working[i] = linearPredictor[i]! + (response[i]! - mu) / mu;
    }
  },
  deviance(response, mean) {
    let sum = 0;
    for (let i = 0; i < mean.length; i += 1) {
      const y = response[i]!;
      const mu = mean[i]!;
      sum += (y > 0 ? y * Math.log(y / mu) : 0) - (y - mu);
    }
    return 2 * sum;
  },
  constantMeanDeviance(response, mean) {
    // 2 sum [y log(y / mu) - (y - mu)] = 2 [sum y log y - S log mu - S + n mu], S = sum y.
    let total = 0;
    let totalYLogY = 0;
    for (let i = 0; i < response.length; i += 1) {
      const y = response[i]!;
      total += y;
      if (y > 0) totalYLogY += y * logOfCount(y);
    }
    return 2 * (totalYLogY - total * Math.log(mean) - total + response.length * mean);
  },
  logLikelihood(response, mean, linearPredictor) {
    let sum = 0;
    for (let i = 0; i < mean.length; i += 1) {
      const y = response[i]!;
      sum += y * linearPredictor[i]! - mean[i]! - logFactorial(y);
    }
    return sum;
  },
  pearsonChiSquare(response, mean) {
    let sum = 0;
    for (let i = 0; i < mean.length; i += 1) sum += (response[i]! - mean[i]!) ** 2 / mean[i]!;
    return sum;
  },
  boundaryCount(mean, tolerance) {
    let count = 0;
    for (let i = 0; i < mean.length; i += 1) if (mean[i]! < tolerance) count += 1;
    return count;
  },
};
