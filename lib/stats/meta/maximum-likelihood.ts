/**
 * Maximum-likelihood (ML) and restricted maximum-likelihood (REML) estimators of tau^2 by Fisher
 * scoring with step-halving and the constraint tau^2 >= 0.
 *
 * References:
 * - Harville, D. A. (1977). Maximum likelihood approaches to variance component estimation and to
 *   related problems. Journal of the American Statistical Association 72: 320-338.
 * - Viechtbauer, W. (2005). Bias and efficiency of meta-analytic variance estimators in the
 *   random-effects model. Journal of Educational and Behavioral Statistics 30: 261-293.
 * - Jennrich, R. I. & Sampson, P. F. (1976). Newton-Raphson and related algorithms for maximum
 *   likelihood variance component estimation. Technometrics 18: 11-17 (step-halving).
 *
 * With beta profiled out (notation of weighted-fit.ts):
 *   ML:   l(tau^2)   = -1/2 [k log 2pi + sum a log(v + tau^2) + Q(tau^2)],
 *         score = 1/2 (sum w u e^2 - sum w), information = 1/2 sum w u;
 *   REML: l_R(tau^2) = -1/2 [(k - p) log 2pi + sum a log(v + tau^2) + log|X'WX| - log|X'AX| + Q(tau^2)],
 *         score = 1/2 (sum w u e^2 - tr P), information = 1/2 tr PP.
 * Each step tau^2 + score / information is projected onto tau^2 >= 0 and halved until the
 * likelihood does not decrease. Converged when the next scoring step would move tau^2 by at most
 * tolerance * (tau^2 + 1 / sqrt(information)), or when tau^2 = 0 and the score is <= 0 (the
 * boundary maximum).
 */
import { WITH_INFORMATION, WITH_LOG_LIKELIHOOD, type WeightedFit } from "./weighted-fit";
import type { IterationControl, Tau2Estimate } from "./tau2-estimate";

export type LikelihoodKind = "ml" | "reml";

const MAX_HALVINGS = 40;

export interface LikelihoodEstimate extends Tau2Estimate {
  readonly logLikelihood: number;
}

interface Measure {
  logLikelihood: number;
  score: number;
  information: number;
}

function measure(fit: WeightedFit, kind: LikelihoodKind): Measure {
  if (kind === "ml") {
    return { logLikelihood: fit.fullLogLikelihood(), score: 0.5 * (fit.qSlope - fit.sumWeights), information: 0.5 * fit.sumWeightsUnit };
  }
  return { logLikelihood: fit.restrictedLogLikelihood(), score: 0.5 * (fit.qSlope - fit.traceP), information: 0.5 * fit.tracePP };
}

/** The flags an evaluation needs for `kind`. */
export function likelihoodFlags(kind: LikelihoodKind): number {
  return kind === "reml" ? WITH_LOG_LIKELIHOOD | WITH_INFORMATION : WITH_LOG_LIKELIHOOD;
}

/**
 * The likelihood (ML) or restricted likelihood (REML) of tau^2 at `tau2`, beta profiled out.
 * Leaves the workspace evaluated there.
 */
export function profileLogLikelihood(fit: WeightedFit, kind: LikelihoodKind, tau2: number): number {
  fit.evaluate(tau2, likelihoodFlags(kind));
  return kind === "ml" ? fit.fullLogLikelihood() : fit.restrictedLogLikelihood();
}

/**
 * Input: a workspace on a full-rank problem (k > p for REML), a start >= 0 (e.g. the DL estimate).
 * Returns the estimate, convergence, iterations (accepted scoring steps), the inverse-information
 * standard error (null at the boundary) and the maximised (restricted) log-likelihood. Leaves the
 * workspace evaluated at the estimate.
 * Example: the 13 BCG vaccine trials give REML tau^2 = 0.3132.
 */
export function likelihoodTau2(fit: WeightedFit, kind: LikelihoodKind, start: number, control: IterationControl): LikelihoodEstimate {
  const flags = likelihoodFlags(kind);
  let tau2 = Math.max(0, start);
  fit.evaluate(tau2, flags);
  let current = measure(fit, kind);
  let converged = false;
  let iterations = 0;
  for (let iteration = 1; iteration <= control.maxIterations; iteration += 1) {
    const step = current.score / current.information;
    if ((tau2 === 0 && step <= 0) || Math.abs(step) <= control.tolerance * (tau2 + 1 / Math.sqrt(current.information))) {
      // At the boundary maximum, or the next step would not move tau^2 beyond the tolerance.
      converged = true;
      break;
    }
    const noise = 1e-13 * (1 + Math.abs(current.logLikelihood));
    let trialStep = step;
    let candidate = Math.max(0, tau2 + trialStep);
    fit.evaluate(candidate, flags);
    let next = measure(fit, kind);
    for (let halving = 0; next.logLikelihood < current.logLikelihood - noise && halving < MAX_HALVINGS; halving += 1) {
      trialStep /= 2;
      candidate = Math.max(0, tau2 + trialStep);
      fit.evaluate(candidate, flags);
      next = measure(fit, kind);
    }
    if (next.logLikelihood < current.logLikelihood - noise) {
      // The score points uphill but no step length climbs: the likelihood is not smooth enough at
      // working precision here. Stop and report non-convergence rather than guess.
      fit.evaluate(tau2, flags);
      break;
    }
    tau2 = candidate;
    current = next;
    iterations = iteration;
  }
  return {
    tau2,
    converged,
    iterations,
    standardError: tau2 > 0 ? 1 / Math.sqrt(current.information) : null,
    logLikelihood: current.logLikelihood,
  };
}
