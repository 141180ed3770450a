/**
 * Maximum-likelihood (ML) and restricted maximum-likelihood (REML) estimates of the variance
 * components of a nested random-intercept meta-analysis: Newton steps in the average-information
 * metric, projected onto sigma2 >= 0, with step-halving and an active set for components at 0.
 *
 * References:
 * - Gilmour, A. R., Thompson, R. & Cullis, B. R. (1995). Average information REML: an efficient
 *   algorithm for variance parameter estimation in linear mixed models. Biometrics 51: 1440-1450.
 * - Jennrich, R. I. & Sampson, P. F. (1976). Newton-Raphson and related algorithms for maximum
 *   likelihood variance component estimation. Technometrics 18: 11-17 (step-halving).
 * - Bertsekas, D. P. (1982). Projected Newton methods for optimization problems with simple
 *   constraints. SIAM Journal on Control and Optimization 20: 221-246 (active set at bounds).
 *
 * Each iteration: the free components are those not held (a held component is fixed by the caller,
 * or sits at 0 with a score <= 0, i.e. the likelihood falls as it grows). The step solves
 * AI_ff delta = score_f (the same-group information of nested-likelihood.ts where AI_ff is
 * singular), is projected onto sigma2 >= 0 and halved until the likelihood does not
 * fall (a step whose predicted gain is below the resolution of the log-likelihood, 1e-11 relative,
 * is taken on the strength of the score alone). Converged when every free component's step is at most tolerance * (sigma2_l + s_l), s_l the
 * AI-based standard deviation of that component, or when no component is free (all at 0 with
 * non-positive scores, the boundary maximum). Otherwise the result says it did not converge.
 */
import { choleskyFactor, choleskyInverse, choleskySolve } from "../../linear/cholesky";
import type { IterationControl } from "../tau2-estimate";
import { WITH_AVERAGE_INFORMATION, WITH_SCORE, type LikelihoodKind, type NestedLikelihood } from "./nested-likelihood";

const MAX_HALVINGS = 40;
/** Relative resolution of a log-likelihood evaluation (sums over many groups lose digits). */
const RESOLUTION = 1e-11;
const FLAGS = WITH_SCORE | WITH_AVERAGE_INFORMATION;

export interface ComponentsEstimate {
  readonly sigma2: Float64Array;
  readonly converged: boolean;
  /** Accepted steps. */
  readonly iterations: number;
  readonly logLikelihood: number;
  /** The score at the estimate (for a held component: the slope of the profile likelihood). */
  readonly score: Float64Array;
  /** Why the iteration stopped early, when it did. */
  readonly failure: string | null;
}

/** A component held at a value (the profile likelihood of that component). */
export interface HeldComponent {
  readonly index: number;
  readonly value: number;
}

/**
 * Solves the damped system (A + lambda diag A) x = b for a symmetric positive semi-definite A,
 * raising lambda from 0 until the factorisation succeeds. Returns null when it never does.
 */
function dampedSolve(matrix: Float64Array, rhs: Float64Array, size: number): { step: Float64Array; inverseDiagonal: Float64Array } | null {
  for (let attempt = 0, lambda = 0; attempt < 12; attempt += 1, lambda = lambda === 0 ? 1e-10 : lambda * 100) {
    const damped = new Float64Array(matrix);
    for (let a = 0; a < size; a += 1) damped[a * size + a] = matrix[a * size + a]! * (1 + lambda);
    const outcome = choleskyFactor(damped, size, 1e-14);
    if (!outcome.ok) continue;
    const inverse = choleskyInverse(outcome.factor);
    const inverseDiagonal = new Float64Array(size);
    for (let a = 0; a < size; a += 1) inverseDiagonal[a] = inverse[a * size + a]!;
    return { step: choleskySolve(outcome.factor, rhs), inverseDiagonal };
  }
  return null;
}

function diagonalSolve(diagonal: number[], rhs: Float64Array): { step: Float64Array; inverseDiagonal: Float64Array } | null {
  if (!diagonal.every((value) => value > 0)) return null;
  return { step: rhs.map((value, a) => value / diagonal[a]!), inverseDiagonal: Float64Array.from(diagonal, (value) => 1 / value) };
}

/**
 * Maximises the likelihood of `kind` over the variance components from `start` (L values; clamped
 * at 0), with `held` fixed when given.
 * Input: a workspace on a full-rank problem; control as in the single-level engine. Returns the
 * estimate with its convergence and the score there; leaves the workspace evaluated at the
 * estimate (with score and average information). Throws ModelInputError (from the workspace) when
 * X'V^{-1}X becomes singular.
 * Example: maximiseLikelihood(work, "reml", [0.1, 0.1], { maxIterations: 1000, tolerance: 1e-10 }).
 */
export function maximiseLikelihood(work: NestedLikelihood, kind: LikelihoodKind, start: ArrayLike<number>, control: IterationControl, held?: HeldComponent): ComponentsEstimate {
  const depth = work.depth;
  const sigma2 = new Float64Array(depth);
  for (let l = 0; l < depth; l += 1) sigma2[l] = Math.max(0, start[l]!);
  if (held) sigma2[held.index] = held.value;
  work.evaluate(sigma2, kind, FLAGS);
  let current = work.logLikelihood;
  let converged = false;
  let iterations = 0;
  let failure: string | null = null;
  const candidate = new Float64Array(depth);
  for (let iteration = 1; iteration <= control.maxIterations; iteration += 1) {
    const free: number[] = [];
    for (let l = 0; l < depth; l += 1) {
      if (held && l === held.index) continue;
      if (sigma2[l] === 0 && work.score[l]! <= 0) continue;
      free.push(l);
    }
    if (free.length === 0) {
      converged = true;
      break;
    }
    const size = free.length;
    const metric = new Float64Array(size * size);
    const rhs = new Float64Array(size);
    free.forEach((l, a) => {
      rhs[a] = work.score[l]!;
      free.forEach((j, b) => (metric[a * size + b] = work.averageInformation[l * depth + j]!));
    });
    // Where the average information vanishes (all residuals 0) the same-group information stands in.
    const solved = dampedSolve(metric, rhs, size) ?? diagonalSolve(free.map((l) => work.diagonalInformation[l]!), rhs);
    if (solved === null) {
      failure = "the information matrix is singular (the likelihood is flat in some direction)";
      break;
    }
    const { step, inverseDiagonal } = solved;
    let small = true;
    free.forEach((l, a) => {
      if (Math.abs(step[a]!) > control.tolerance * (sigma2[l]! + Math.sqrt(Math.max(inverseDiagonal[a]!, 0)))) small = false;
    });
    if (small) {
      converged = true;
      break;
    }
    const noise = 1e-13 * (1 + Math.abs(current));
    // A full step's predicted gain 1/2 score'step; below the resolution of the log-likelihood a
    // comparison of values says nothing, and the analytic score is trusted instead.
    let predictedGain = 0;
    free.forEach((l, a) => (predictedGain += 0.5 * work.score[l]! * step[a]!));
    const resolution = RESOLUTION * (1 + Math.abs(current));
    let factor = 1;
    let accepted = false;
    for (let halving = 0; halving <= MAX_HALVINGS; halving += 1, factor /= 2) {
      candidate.set(sigma2);
      free.forEach((l, a) => (candidate[l] = Math.max(0, sigma2[l]! + factor * step[a]!)));
      work.evaluate(candidate, kind, FLAGS);
      if (work.logLikelihood >= current - noise || (halving === 0 && predictedGain <= resolution)) {
        accepted = true;
        break;
      }
    }
    if (!accepted) {
      // The step points uphill in the metric but no length climbs: the likelihood is not smooth
      // enough at working precision here. Stop and say so rather than guess.
      work.evaluate(sigma2, kind, FLAGS);
      failure = "no step length increased the likelihood";
      break;
    }
    sigma2.set(candidate);
    current = work.logLikelihood;
    iterations = iteration;
  }
  if (!converged && failure === null) failure = `the iteration limit (${control.maxIterations}) was reached`;
  return { sigma2, converged, iterations, logLikelihood: work.logLikelihood, score: Float64Array.from(work.score), failure };
}
