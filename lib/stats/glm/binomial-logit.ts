import type { GlmFamily } from "./glm-family";

/**
 * Binary response (0/1) with the logit link: log(p / (1 - p)) = eta.
 *
 * References:
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed., ch. 4.
 *
 * Fitted probabilities are kept inside [eps, 1 - eps] (eps = 2^-52) so that the working response
 * stays finite when a linear predictor grows without bound (separation); the deviance is computed
 * from eta, which keeps precision for probabilities near 0 or 1.
 */
const EPSILON = 2.220446049250313e-16;

/** log(1 + exp(x)) without overflow. */
function softplus(x: number): number {
  return x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x));
}

/** -2 log-likelihood of 0/1 responses at linear predictors eta (equal to the residual deviance). */
function binaryDeviance(response: ArrayLike<number>, linearPredictor: Float64Array): number {
  let sum = 0;
  for (let i = 0; i < linearPredictor.length; i += 1) {
    const eta = linearPredictor[i]!;
    sum += response[i]! === 1 ? softplus(-eta) : softplus(eta);
  }
  return 2 * sum;
}

export const binomialLogit: GlmFamily = {
  name: "binomial",
  link: "logit",
  invalidResponse(response) {
    for (let i = 0; i < response.length; i += 1) {
      const y = response[i]!;
      if (y !== 0 && y !== 1) return `response ${i + 1} is ${y}; a binary outcome must be 0 or 1`;
    }
    return null;
  },
  initialMean(response, mean) {
    for (let i = 0; i < response.length; i += 1) mean[i] = (response[i]! + 0.5) / 2;
  },
  linkOf(mean) {
    return Math.log(mean / (1 - mean));
  },
  meanOf(linearPredictor, mean) {
    for (let i = 0; i < linearPredictor.length; i += 1) {
      const eta = linearPredictor[i]!;
      const e = Math.exp(-Math.abs(eta));
      const p = eta >= 0 ? 1 / (1 + e) : e / (1 + e);
      mean[i] = p < EPSILON ? EPSILON : p > 1 - EPSILON ? 1 - EPSILON : p;
    }
  },
  meanAndDeviance(response, linearPredictor, mean) {
    // One exp(-|eta|) serves the mean and softplus(+-eta) = max(+-eta, 0) + log1p(exp(-|eta|)).
    let sum = 0;
    for (let i = 0; i < linearPredictor.length; i += 1) {
      const eta = linearPredictor[i]!;
      const e = Math.exp(-Math.abs(eta));
      const p = eta >= 0 ? 1 / (1 + e) : e / (1 + e);
      mean[i] = p < EPSILON ? EPSILON : p > 1 - EPSILON ? 1 - EPSILON : p;
      const x = response[i]! === 1 ? -eta : eta;
      sum += x > 0 ? x + Math.log1p(e) : Math.log1p(e);
    }
    return 2 * sum;
  },
  workingWeightsAndResponse(linearPredictor, mean, response, weights, working) {
    for (let i = 0; i < mean.length; i += 1) {
      const mu = mean[i]!;
      const derivative = Math.max(mu * (1 - mu), EPSILON);
      weights[i] = derivative;
      working[i] = linearPredictor[i]! + (response[i]! - mu) / derivative;
    }
  },
  deviance(response, _mean, linearPredictor) {
    return binaryDeviance(response, linearPredictor);
  },
  constantMeanDeviance(response, _mean, linearPredictor) {
    // The per-observation terms softplus(-eta) (y = 1) and softplus(eta) (y = 0), counted; an
    // absent class adds nothing (its term may be infinite when every outcome is the same).
    let ones = 0;
    for (let i = 0; i < response.length; i += 1) if (response[i]! === 1) ones += 1;
    const zeros = response.length - ones;
    return 2 * ((ones > 0 ? ones * softplus(-linearPredictor) : 0) + (zeros > 0 ? zeros * softplus(linearPredictor) : 0));
  },
  logLikelihood(response, _mean, linearPredictor, deviance) {
    return -0.5 * (deviance ?? binaryDeviance(response, linearPredictor));
  },
  pearsonChiSquare(response, mean) {
    let sum = 0;
    for (let i = 0; i < mean.length; i += 1) {
      const mu = mean[i]!;
      sum += (response[i]! - mu) ** 2 / (mu * (1 - mu));
    }
    return sum;
  },
  boundaryCount(mean, tolerance) {
    let count = 0;
    for (let i = 0; i < mean.length; i += 1) if (mean[i]! < tolerance || mean[i]! > 1 - tolerance) count += 1;
    return count;
  },
};
