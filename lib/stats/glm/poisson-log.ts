import type { GlmFamily } from "./glm-family";

/**
 * Count response (0, 1, 2, ...) with the log link: log(mu) = eta.
 *
 * References:
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed., ch. 6.
 */
const logFactorials: number[] = [0];

/** log(y!) for a whole number y, from a table grown on demand (exact sums of logs). */
function logFactorial(y: number): number {
  for (let k = logFactorials.length; k <= y; k += 1) logFactorials.push(logFactorials[k - 1]! + Math.log(k));
  return logFactorials[y]!;
}

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
    // The floor keeps the working response finite when a fitted mean tends to 0.
    for (let i = 0; i < linearPredictor.length; i += 1) mean[i] = Math.max(Math.exp(linearPredictor[i]!), 2.220446049250313e-16);
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
