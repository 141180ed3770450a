/**
 * The weighted least-squares fit of the fixed effects at a trial value of tau^2, with the
 * quantities every tau^2 estimator, test and interval is built from. One reusable workspace per
 * problem: evaluations overwrite its typed arrays, so iterative estimators allocate nothing per
 * study and nothing per iteration beyond p x p scratch.
 *
 * References:
 * - Raudenbush, S. W. (2009). Analyzing effect sizes: random-effects models. In Cooper, Hedges &
 *   Valentine (eds.), The Handbook of Research Synthesis and Meta-Analysis, 2nd ed., ch. 16.
 * - Viechtbauer, W. (2005). Bias and efficiency of meta-analytic variance estimators in the
 *   random-effects model. Journal of Educational and Behavioral Statistics 30: 261-293.
 *
 * Notation (case weights a_i, 1 when absent; the fit treats study i as a_i copies):
 *   u_i = 1 / (v_i + tau^2), w_i = a_i u_i, W = diag(w), beta = (X'WX)^{-1} X'Wy, e = y - X beta,
 *   Q(tau^2) = sum w_i e_i^2 (the generalised Q), P = W - W X (X'WX)^{-1} X' W (per copy),
 *   tr P = sum w_i - tr[(X'WX)^{-1} X' W U X],
 *   tr PP = sum w_i u_i - 2 tr[(X'WX)^{-1} X' W U^2 X] + tr[((X'WX)^{-1} X' W U X)^2],
 *   dQ/dtau^2 = -sum w_i u_i e_i^2 (envelope theorem: beta minimises the weighted sum).
 */
import { choleskyFactor, choleskyInverse, choleskyLogDeterminant, choleskySolve } from "../linear/cholesky";
import { ModelInputError } from "../model-error";
import { crossProductKernel, kernelOutputLength, residualKernel, tau2CrossProductKernel, unpackLowerTriangle } from "./cross-product-kernel";

/** The problem in the conditioned coordinates of design-conditioning.ts. */
export interface MetaProblem {
  readonly k: number;
  readonly p: number;
  /** Sum of the case weights (k without them). */
  readonly effectiveK: number;
  readonly estimates: Float64Array;
  readonly variances: Float64Array;
  readonly caseWeights: Float64Array | null;
  /** Conditioned design Z, row-major k x p. Permutation tests rewrite it in place. */
  readonly design: Float64Array;
  /** log det Z'Z when already known (it is invariant under permutation of the rows). */
  readonly logDetGram?: number;
}

/** Evaluation flags: which quantities beyond beta, Q and dQ/dtau^2 to form. */
export const WITH_TRACE = 1;
export const WITH_LOG_LIKELIHOOD = 2;
export const WITH_INFORMATION = 4;

const LOG_TWO_PI = Math.log(2 * Math.PI);

/**
 * The workspace for one problem. Construct once, then evaluate() at trial tau^2 values and read the
 * public fields (valid until the next evaluation). Input: a full-rank conditioned problem with
 * k > p. Example: new WeightedFit(problem).evaluate(0.1, WITH_TRACE) sets q, traceP, coefficients.
 */
export class WeightedFit {
  readonly problem: MetaProblem;
  /** tau^2 of the last evaluation (NaN before the first, or after an unweighted evaluation). */
  tau2 = Number.NaN;
  private evaluatedFlags = -1;
  /** u_i of the last evaluation. */
  readonly unitWeights: Float64Array;
  /** w_i = a_i u_i of the last evaluation. */
  readonly weights: Float64Array;
  readonly xtwx: Float64Array;
  readonly xtwy: Float64Array;
  readonly coefficients: Float64Array;
  /** (X'WX)^{-1}, p x p row-major. */
  inverse: Float64Array;
  sumWeights = 0;
  /** sum w_i u_i. */
  sumWeightsUnit = 0;
  /** sum a_i log(v_i + tau^2) (with WITH_LOG_LIKELIHOOD). */
  sumLogTotalVariance = 0;
  /** log det X'WX (with WITH_LOG_LIKELIHOOD). */
  logDetXtwx = 0;
  q = 0;
  /** -dQ/dtau^2 = sum w_i u_i e_i^2. */
  qSlope = 0;
  /** tr P (with WITH_TRACE or WITH_INFORMATION). */
  traceP = Number.NaN;
  /** tr PP (with WITH_INFORMATION). */
  tracePP = Number.NaN;
  private readonly sums: Float64Array;
  private readonly residualSums = new Float64Array(2);
  private logDetXtAX: number | null = null;
  private olsResidualSum: number | null = null;

  constructor(problem: MetaProblem) {
    this.problem = problem;
    const { k, p } = problem;
    this.unitWeights = new Float64Array(k);
    this.weights = new Float64Array(k);
    this.xtwx = new Float64Array(p * p);
    this.xtwy = new Float64Array(p);
    this.coefficients = new Float64Array(p);
    this.inverse = new Float64Array(p * p);
    this.sums = new Float64Array(kernelOutputLength(p));
  }

  /** Forgets the cached evaluation (after the design was rewritten in place). */
  invalidate(): void {
    this.evaluatedFlags = -1;
    this.tau2 = Number.NaN;
    this.logDetXtAX = null;
    this.olsResidualSum = null;
  }

  /**
   * sum a_i (y_i - x_i' b)^2 for the (case-weighted) least-squares b, computed once per design.
   * Bounds the generalised Q: Q(tau^2) < this / tau^2 for every tau^2 > 0.
   */
  olsResidualSumOfSquares(): number {
    if (this.olsResidualSum === null) {
      this.evaluateUnweighted();
      this.olsResidualSum = this.q;
    }
    return this.olsResidualSum;
  }

  /**
   * Evaluates at `tau2` (>= 0). Repeated calls at the same tau2 with no new flags reuse the last
   * evaluation. Throws ModelInputError when X'WX is numerically singular at these weights (a full
   * rank design can still be, when the sampling variances differ by many orders of magnitude).
   */
  evaluate(tau2: number, flags = 0): void {
    if (tau2 === this.tau2 && (this.evaluatedFlags & flags) === flags && this.evaluatedFlags >= 0) return;
    this.tau2 = Number.NaN;
    this.evaluatedFlags = -1;
    this.accumulate(flags, tau2);
    this.tau2 = tau2;
    this.evaluatedFlags = flags;
  }

  /** Ordinary least squares (u_i = 1, weights a_i): for the moment estimators' starting points. */
  evaluateUnweighted(): void {
    const { caseWeights } = this.problem;
    this.unitWeights.fill(1);
    if (caseWeights === null) this.weights.fill(1);
    else this.weights.set(caseWeights);
    this.tau2 = Number.NaN;
    this.evaluatedFlags = -1;
    this.accumulate(0, Number.NaN, true);
  }

  /** ML log-likelihood at the last evaluation (needs WITH_LOG_LIKELIHOOD). */
  fullLogLikelihood(): number {
    return -0.5 * (this.problem.effectiveK * LOG_TWO_PI + this.sumLogTotalVariance + this.q);
  }

  /**
   * REML log-likelihood at the last evaluation (needs WITH_LOG_LIKELIHOOD), in Harville's form
   * with + 1/2 log det X'AX, so the value does not depend on how the moderators are coded.
   */
  restrictedLogLikelihood(): number {
    const { effectiveK, p } = this.problem;
    return -0.5 * ((effectiveK - p) * LOG_TWO_PI + this.sumLogTotalVariance + this.logDetXtwx - this.logDeterminantXtAX() + this.q);
  }

  /** log det X'AX (unit weights), computed once per design (given by the problem when it has it). */
  private logDeterminantXtAX(): number {
    if (this.logDetXtAX !== null) return this.logDetXtAX;
    const { k, p, design, caseWeights, logDetGram } = this.problem;
    if (caseWeights === null && logDetGram !== undefined) {
      this.logDetXtAX = logDetGram;
      return logDetGram;
    }
    const ones = new Float64Array(k).fill(1);
    const sums = new Float64Array(kernelOutputLength(p));
    crossProductKernel(p, 0)(design, k, caseWeights ?? ones, ones, ones, sums);
    const gram = new Float64Array(p * p);
    unpackLowerTriangle(sums.subarray(2 + p), gram, p);
    const outcome = choleskyFactor(gram, p);
    this.logDetXtAX = outcome.ok ? choleskyLogDeterminant(outcome.factor) : Number.NaN;
    return this.logDetXtAX;
  }

  /**
   * Forms the weights at tau2 (or uses the given ones) and the cross-products in one pass, solves
   * for beta, then one residual pass.
   */
  private accumulate(flags: number, tau2: number, givenWeights = false): void {
    const { k, p, estimates, design, variances, caseWeights } = this.problem;
    const needTrace = (flags & (WITH_TRACE | WITH_INFORMATION)) !== 0;
    const needInformation = (flags & WITH_INFORMATION) !== 0;
    const withLog = (flags & WITH_LOG_LIKELIHOOD) !== 0;
    const level = needInformation ? 2 : needTrace ? 1 : 0;
    const sums = this.sums;
    const unit = this.unitWeights;
    const weights = this.weights;
    if (givenWeights) crossProductKernel(p, level)(design, k, weights, unit, estimates, sums);
    else tau2CrossProductKernel(p, level, caseWeights !== null, withLog)(design, k, variances, tau2, caseWeights, estimates, unit, weights, sums);
    this.sumLogTotalVariance = sums[sums.length - 1]!;
    const packed = (p * (p + 1)) / 2;
    const sumWeights = sums[0]!;
    const sumWeightsUnit = sums[1]!;
    this.sumWeights = sumWeights;
    this.sumWeightsUnit = sumWeightsUnit;
    this.xtwy.set(sums.subarray(2, 2 + p));
    unpackLowerTriangle(sums.subarray(2 + p), this.xtwx, p);
    const outcome = choleskyFactor(this.xtwx, p);
    if (!outcome.ok) {
      const at = Number.isNaN(tau2) ? "with unit weights" : `at tau^2 = ${tau2}`;
      throw new ModelInputError(`the weighted design is numerically singular ${at} (column ${outcome.column + 1}): the sampling variances differ too much for these moderators`);
    }
    const beta = choleskySolve(outcome.factor, this.xtwy);
    this.coefficients.set(beta);
    this.inverse = choleskyInverse(outcome.factor);
    if (flags & WITH_LOG_LIKELIHOOD) this.logDetXtwx = choleskyLogDeterminant(outcome.factor);
    if (needTrace) {
      const s2 = new Float64Array(p * p);
      unpackLowerTriangle(sums.subarray(2 + p + packed), s2, p);
      const inverseTimesS2 = multiply(this.inverse, s2, p);
      let trace = 0;
      for (let r = 0; r < p; r += 1) trace += inverseTimesS2[r * p + r]!;
      this.traceP = sumWeights - trace;
      if (needInformation) {
        const s3 = new Float64Array(p * p);
        unpackLowerTriangle(sums.subarray(2 + p + 2 * packed), s3, p);
        const inverseTimesS3 = multiply(this.inverse, s3, p);
        let traceS3 = 0;
        let traceSquare = 0;
        for (let r = 0; r < p; r += 1) {
          traceS3 += inverseTimesS3[r * p + r]!;
          for (let c = 0; c < p; c += 1) traceSquare += inverseTimesS2[r * p + c]! * inverseTimesS2[c * p + r]!;
        }
        this.tracePP = sumWeightsUnit - 2 * traceS3 + traceSquare;
      }
    }
    const residualSums = this.residualSums;
    residualKernel(p)(design, k, this.coefficients, estimates, weights, unit, residualSums);
    const q = residualSums[0]!;
    const qSlope = residualSums[1]!;
    this.q = q;
    this.qSlope = qSlope;
  }
}

function multiply(left: Float64Array, right: Float64Array, p: number): Float64Array {
  const result = new Float64Array(p * p);
  for (let r = 0; r < p; r += 1) {
    for (let c = 0; c < p; c += 1) {
      let sum = 0;
      for (let m = 0; m < p; m += 1) sum += left[r * p + m]! * right[m * p + c]!;
      result[r * p + c] = sum;
    }
  }
  return result;
}
