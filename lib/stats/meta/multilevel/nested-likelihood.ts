/**
 * The (restricted) likelihood of a meta-analysis with nested random intercepts, its score and the
 * average-information matrix, computed on the nesting tree without forming any k x k matrix.
 *
 * References:
 * - Harville, D. A. (1977). Maximum likelihood approaches to variance component estimation and to
 *   related problems. Journal of the American Statistical Association 72: 320-338 (likelihood,
 *   restricted likelihood and their scores).
 * - Sherman, J. & Morrison, W. J. (1950). Adjustment of an inverse matrix corresponding to a
 *   change in one element of a given matrix. Annals of Mathematical Statistics 21: 124-127.
 * - Gilmour, A. R., Thompson, R. & Cullis, B. R. (1995). Average information REML: an efficient
 *   algorithm for variance parameter estimation in linear mixed models. Biometrics 51: 1440-1450.
 *
 * Model: y = X beta + sum_l Z_l u_l + e, u_l ~ N(0, sigma2_l I), e ~ N(0, diag(v)), so
 * V = diag(v) + sum_l sigma2_l Z_l Z_l' (Z_l the 0/1 indicators of the groups at level l). V is
 * block diagonal by outermost group. For a group g at level l with child blocks B (the groups it
 * holds at level l + 1, or its estimates at the innermost level), V_g = B + sigma2_l 1 1', so by
 * Sherman-Morrison, for the columns C = [X, y]:
 *   n_g = 1' B^{-1} 1,  t_g = 1' B^{-1} C,  d_g = 1 + sigma2_l n_g,
 *   C' V_g^{-1} C = C' B^{-1} C - (sigma2_l / d_g) t_g t_g',  log|V_g| = log|B| + log d_g,
 * and the parent receives n_g / d_g and t_g / d_g. The subtraction would lose digits when
 * sigma2_l n_g is large (a group of precise estimates), so it is carried out in the equivalent
 * form around group means cbar_g = t_g / n_g: with S the scatter within the children,
 *   C' V_g^{-1} C = S_g + t_g t_g' / (n_g d_g),
 *   S_g = sum_children S_c + sum_children (n_c / d_c) (cbar_c - cbar_g)(cbar_c - cbar_g)',
 * every term positive semi-definite. Summed over the tree, C' V^{-1} C is the scatter of the
 * estimates within their innermost groups (fixed), plus each group's weighted scatter about its
 * parent's mean, plus t t' / (n d) of each outermost group; log|V| = sum log v_i + sum_g log d_g.
 * The score needs, for every group, 1_g' V^{-1} C and 1_g' V^{-1} 1_g with the whole V; a pass
 * from the outermost level inwards gives them from the same n, t, d (psi recursions below). The
 * work per evaluation is O(G m^2) for G groups and m = p + 1 columns; the estimates enter only
 * once, through their sums within the innermost groups.
 *
 * With r = y - X beta_GLS and P = V^{-1} - V^{-1} X (X'V^{-1}X)^{-1} X' V^{-1}:
 *   ML:   l   = -1/2 [k log 2pi + log|V| + r'V^{-1}r],
 *         dl/dsigma2_l = 1/2 [sum_g (1_g'V^{-1}r)^2 - sum_g 1_g'V^{-1}1_g];
 *   REML: l_R = -1/2 [(k - p) log 2pi + log|V| + log|X'V^{-1}X| - log|X'X| + r'V^{-1}r],
 *         dl_R/dsigma2_l = 1/2 [sum_g (1_g'V^{-1}r)^2 - sum_g 1_g'P 1_g];
 *   average information AI_lm = 1/2 q_l' P q_m with q_l = Z_l Z_l' V^{-1} r (the same matrix for
 *   both kinds: it is the Newton metric of the optimiser, not a reported quantity).
 * log|X'X| is Harville's constant, taken on the conditioned design (design-conditioning.ts) like
 * the single-level engine, so the value does not depend on how the moderators are coded.
 *
 * The outcome is first replaced by its residual from the fit at sigma2 = 0 (an exact shift of
 * beta), so that r'V^{-1}r = y'V^{-1}y - beta'X'V^{-1}y is not a difference of large numbers.
 */
import { choleskyFactor, choleskyInverse, choleskyLogDeterminant, choleskySolve } from "../../linear/cholesky";
import { ModelInputError } from "../../model-error";
import type { NestedLevels } from "./nested-levels";

export type LikelihoodKind = "ml" | "reml";

/** A multilevel problem in the conditioned coordinates of design-conditioning.ts. */
export interface MultilevelProblem {
  readonly k: number;
  readonly p: number;
  readonly estimates: Float64Array;
  readonly variances: Float64Array;
  /** Conditioned design Z, row-major k x p. */
  readonly design: Float64Array;
  /** log det Z'Z of the conditioned design. */
  readonly logDetGram: number;
  readonly levels: NestedLevels;
}

export const WITH_SCORE = 1;
export const WITH_AVERAGE_INFORMATION = 2;

const LOG_TWO_PI = Math.log(2 * Math.PI);

/**
 * The workspace of one problem. Construct once, evaluate() at trial variance components, read the
 * public fields (valid until the next evaluation).
 * Example: const w = new NestedLikelihood(problem); w.evaluate([0.1, 0.05], "reml", WITH_SCORE);
 * w.logLikelihood, w.score.
 */
export class NestedLikelihood {
  readonly problem: MultilevelProblem;
  /** Number of levels L. */
  readonly depth: number;
  readonly sigma2: Float64Array;
  kind: LikelihoodKind = "reml";
  /** Coefficients (conditioned coordinates) of the last evaluation. */
  readonly coefficients: Float64Array;
  /** (X'V^{-1}X)^{-1}, p x p. */
  inverse: Float64Array;
  logDetV = 0;
  logDetXtVX = 0;
  /** r'V^{-1}r. */
  quadratic = 0;
  logLikelihood = Number.NaN;
  /** dl/dsigma2_l (with WITH_SCORE). */
  readonly score: Float64Array;
  /** L x L average information (with WITH_AVERAGE_INFORMATION). */
  readonly averageInformation: Float64Array;
  /**
   * 1/2 sum_g (1_g'P 1_g)^2 per level (V^{-1} for ML; with WITH_SCORE): the same-group part of the
   * expected information, a positive fallback metric where the average information vanishes
   * (residuals all 0).
   */
  readonly diagonalInformation: Float64Array;

  private readonly columns: number;
  /** Innermost-group sums 1'D^{-1}1 and 1'D^{-1}C of the estimates (D = diag(v)). */
  private readonly leafN: Float64Array;
  private readonly leafT: Float64Array;
  /** The scatter of [X, y] within the innermost groups, sum_i (c_i - cbar_g)(c_i - cbar_g)' / v_i, m x m. */
  private readonly leafScatter: Float64Array;
  private readonly sumLogVariance: number;
  private readonly offsetCoefficients: Float64Array;
  /** Per level: n_g, t_g (m per group), d_g, psi_g (m per group), scalar psi_g, 1_g'V^{-1}r. */
  private readonly nodeN: Float64Array[];
  private readonly nodeT: Float64Array[];
  private readonly nodeD: Float64Array[];
  private readonly nodePsi: Float64Array[];
  private readonly nodePsiScalar: Float64Array[];
  private readonly nodeResidual: Float64Array[];
  /** innermostAncestor[l][g]: the level-l group holding innermost group g. */
  private readonly innermostAncestor: Int32Array[];
  private readonly gram: Float64Array;
  /** Scratch of the average-information pass: per level t over [X, q_1..q_L], its Gram matrix. */
  private readonly wideT: Float64Array[];
  private readonly wideGram: Float64Array;
  /** Scratch row of the bottom-up pass. */
  private readonly deviation: Float64Array;

  /**
   * Input: a full-rank conditioned problem with k > p and at least one level.
   * Throws ModelInputError when X' diag(v)^{-1} X is numerically singular.
   */
  constructor(problem: MultilevelProblem) {
    this.problem = problem;
    const { k, p, levels, variances, design, estimates } = problem;
    const depth = levels.names.length;
    this.depth = depth;
    const m = p + 1;
    this.columns = m;
    this.sigma2 = new Float64Array(depth);
    this.coefficients = new Float64Array(p);
    this.inverse = new Float64Array(p * p);
    this.score = new Float64Array(depth);
    this.averageInformation = new Float64Array(depth * depth);
    this.diagonalInformation = new Float64Array(depth);
    this.nodeN = levels.groupCounts.map((count) => new Float64Array(count));
    this.nodeT = levels.groupCounts.map((count) => new Float64Array(count * m));
    this.nodeD = levels.groupCounts.map((count) => new Float64Array(count));
    this.nodePsi = levels.groupCounts.map((count) => new Float64Array(count * m));
    this.nodePsiScalar = levels.groupCounts.map((count) => new Float64Array(count));
    this.nodeResidual = levels.groupCounts.map((count) => new Float64Array(count));
    this.gram = new Float64Array(m * m);
    this.wideT = levels.groupCounts.map((count) => new Float64Array(count * (p + depth)));
    this.wideGram = new Float64Array((p + depth) * (p + depth));
    this.deviation = new Float64Array(p + depth + 1);

    const innermost = depth - 1;
    const innerCount = levels.groupCounts[innermost]!;
    this.innermostAncestor = [];
    for (let l = 0; l < depth; l += 1) this.innermostAncestor.push(new Int32Array(innerCount));
    for (let g = 0; g < innerCount; g += 1) {
      let node = g;
      for (let l = innermost; l >= 0; l -= 1) {
        this.innermostAncestor[l]![g] = node;
        if (l > 0) node = levels.parents[l]![node]!;
      }
    }

    // The shift: beta_0 from weights 1/v, then the outcome's residual from it.
    let sumLog = 0;
    const xtdx = new Float64Array(p * p);
    const xtdy = new Float64Array(p);
    for (let i = 0; i < k; i += 1) {
      const w = 1 / variances[i]!;
      sumLog += Math.log(variances[i]!);
      const offset = i * p;
      for (let a = 0; a < p; a += 1) {
        const xa = w * design[offset + a]!;
        xtdy[a] += xa * estimates[i]!;
        for (let b = 0; b <= a; b += 1) xtdx[a * p + b] += xa * design[offset + b]!;
      }
    }
    for (let a = 0; a < p; a += 1) for (let b = 0; b < a; b += 1) xtdx[b * p + a] = xtdx[a * p + b]!;
    const outcome = choleskyFactor(xtdx, p);
    if (!outcome.ok) throw new ModelInputError(`the weighted design is numerically singular (column ${outcome.column + 1}): the sampling variances differ too much for these moderators`);
    this.offsetCoefficients = choleskySolve(outcome.factor, xtdy);
    this.sumLogVariance = sumLog;

    this.leafN = new Float64Array(innerCount);
    this.leafT = new Float64Array(innerCount * m);
    this.leafScatter = new Float64Array(m * m);
    const rowGroup = levels.rowGroups[innermost]!;
    const shifted = new Float64Array(k);
    for (let i = 0; i < k; i += 1) {
      let fitted = 0;
      for (let a = 0; a < p; a += 1) fitted += design[i * p + a]! * this.offsetCoefficients[a]!;
      shifted[i] = estimates[i]! - fitted;
    }
    const value = (i: number, a: number): number => (a < p ? design[i * p + a]! : shifted[i]!);
    for (let i = 0; i < k; i += 1) {
      const w = 1 / variances[i]!;
      const at = rowGroup[i]! * m;
      this.leafN[rowGroup[i]!] += w;
      for (let a = 0; a < m; a += 1) this.leafT[at + a] += w * value(i, a);
    }
    const deviation = new Float64Array(m);
    for (let i = 0; i < k; i += 1) {
      const w = 1 / variances[i]!;
      const g = rowGroup[i]!;
      for (let a = 0; a < m; a += 1) deviation[a] = value(i, a) - this.leafT[g * m + a]! / this.leafN[g]!;
      for (let a = 0; a < m; a += 1) {
        const wa = w * deviation[a]!;
        for (let b = 0; b <= a; b += 1) this.leafScatter[a * m + b] += wa * deviation[b]!;
      }
    }
  }

  /** Coefficients in conditioned coordinates: the shift plus the fitted correction. */
  conditionedCoefficients(): Float64Array {
    const result = new Float64Array(this.problem.p);
    for (let a = 0; a < this.problem.p; a += 1) result[a] = this.offsetCoefficients[a]! + this.coefficients[a]!;
    return result;
  }

  /**
   * Evaluates at `sigma2` (L values >= 0) for `kind`; `flags` adds the score and the average
   * information. Throws ModelInputError when X'V^{-1}X is numerically singular there.
   */
  evaluate(sigma2: ArrayLike<number>, kind: LikelihoodKind, flags = 0): void {
    const { p, k, levels, logDetGram } = this.problem;
    const depth = this.depth;
    const m = this.columns;
    for (let l = 0; l < depth; l += 1) this.sigma2[l] = sigma2[l]!;
    this.kind = kind;
    // n_g and d_g at every level, and log|V|.
    let logDet = this.sumLogVariance;
    const innermost = depth - 1;
    for (let l = innermost; l >= 0; l -= 1) {
      const s = this.sigma2[l]!;
      const nArray = this.nAt(l);
      const dArray = this.nodeD[l]!;
      const parentN = l > 0 ? this.nodeN[l - 1]! : null;
      const parents = levels.parents[l]!;
      if (parentN !== null) parentN.fill(0);
      for (let g = 0; g < nArray.length; g += 1) {
        const n = nArray[g]!;
        const sn = s * n;
        dArray[g] = 1 + sn;
        logDet += Math.log1p(sn);
        if (parentN !== null) parentN[parents[g]!] += n / (1 + sn);
      }
    }
    this.logDetV = logDet;
    const gram = this.gram;
    gram.set(this.leafScatter);
    this.bottomUp(m, this.nodeT, this.leafT, gram);

    const xtvx = new Float64Array(p * p);
    const xtvy = new Float64Array(p);
    for (let a = 0; a < p; a += 1) {
      xtvy[a] = gram[a * m + p]!;
      for (let b = 0; b < p; b += 1) xtvx[a * p + b] = gram[a * m + b]!;
    }
    const outcome = choleskyFactor(xtvx, p);
    if (!outcome.ok) {
      throw new ModelInputError(`the weighted design is numerically singular at variance components [${Array.from(this.sigma2).join(", ")}] (column ${outcome.column + 1})`);
    }
    const beta = choleskySolve(outcome.factor, xtvy);
    this.coefficients.set(beta);
    this.inverse = choleskyInverse(outcome.factor);
    this.logDetXtVX = choleskyLogDeterminant(outcome.factor);
    let fittedPart = 0;
    for (let a = 0; a < p; a += 1) fittedPart += beta[a]! * xtvy[a]!;
    this.quadratic = Math.max(0, gram[p * m + p]! - fittedPart);
    this.logLikelihood =
      kind === "ml"
        ? -0.5 * (k * LOG_TWO_PI + logDet + this.quadratic)
        : -0.5 * ((k - p) * LOG_TWO_PI + logDet + this.logDetXtVX - logDetGram + this.quadratic);
    if ((flags & (WITH_SCORE | WITH_AVERAGE_INFORMATION)) !== 0) this.topDown();
    if ((flags & WITH_AVERAGE_INFORMATION) !== 0) this.averageInformationPass();
  }

  /** n_g of level l (the leaf sums at the innermost level). */
  private nAt(l: number): Float64Array {
    return l === this.depth - 1 ? this.leafN : this.nodeN[l]!;
  }

  /**
   * The stable bottom-up pass for `width` columns (module comment): fills t_g at every level above
   * the innermost (whose t is `innerT`) and adds to `gram` (which holds the within-innermost
   * scatter) each group's weighted scatter about its parent's mean, and t t' / (n d) of each
   * outermost group; leaves `gram` symmetric. Needs n_g and d_g of the current evaluation.
   */
  private bottomUp(width: number, tLevels: Float64Array[], innerT: Float64Array, gram: Float64Array): void {
    const { levels } = this.problem;
    const innermost = this.depth - 1;
    const deviation = this.deviation;
    for (let l = innermost; l >= 0; l -= 1) {
      const nArray = this.nAt(l);
      const dArray = this.nodeD[l]!;
      const t = l === innermost ? innerT : tLevels[l]!;
      const counts = nArray.length;
      if (l === 0) {
        for (let g = 0; g < counts; g += 1) {
          const inverseN = 1 / nArray[g]!;
          const weight = nArray[g]! / dArray[g]!;
          const at = g * width;
          for (let a = 0; a < width; a += 1) deviation[a] = t[at + a]! * inverseN;
          for (let a = 0; a < width; a += 1) {
            const wa = weight * deviation[a]!;
            for (let b = 0; b <= a; b += 1) gram[a * width + b] += wa * deviation[b]!;
          }
        }
        continue;
      }
      const parentT = tLevels[l - 1]!;
      const parentN = this.nodeN[l - 1]!;
      const parents = levels.parents[l]!;
      parentT.fill(0);
      for (let g = 0; g < counts; g += 1) {
        const inverseD = 1 / dArray[g]!;
        const at = g * width;
        const parentAt = parents[g]! * width;
        for (let a = 0; a < width; a += 1) parentT[parentAt + a] += t[at + a]! * inverseD;
      }
      for (let g = 0; g < counts; g += 1) {
        const inverseN = 1 / nArray[g]!;
        const parent = parents[g]!;
        const inverseParentN = 1 / parentN[parent]!;
        const weight = nArray[g]! / dArray[g]!;
        const at = g * width;
        const parentAt = parent * width;
        for (let a = 0; a < width; a += 1) deviation[a] = t[at + a]! * inverseN - parentT[parentAt + a]! * inverseParentN;
        for (let a = 0; a < width; a += 1) {
          const wa = weight * deviation[a]!;
          for (let b = 0; b <= a; b += 1) gram[a * width + b] += wa * deviation[b]!;
        }
      }
    }
    for (let a = 0; a < width; a += 1) for (let b = 0; b < a; b += 1) gram[b * width + a] = gram[a * width + b]!;
  }

  /**
   * From the outermost level inwards: psi_g = (sigma2 t_g + psi_parent) / d_g and
   * psiScalar_g = sigma2 / d_g + psiScalar_parent / d_g^2, so that with the whole V
   *   1_g'V^{-1}C = (t_g - n_g psi_parent) / d_g,  1_g'V^{-1}1_g = e - e^2 psiScalar_parent, e = n_g / d_g.
   * Then the score, per level.
   */
  private topDown(): void {
    const { p, levels } = this.problem;
    const depth = this.depth;
    const m = this.columns;
    const beta = this.coefficients;
    const inverse = this.inverse;
    const innermost = depth - 1;
    const fullRow = new Float64Array(m);
    for (let l = 0; l < depth; l += 1) {
      const s = this.sigma2[l]!;
      const counts = levels.groupCounts[l]!;
      const nArray = l === innermost ? this.leafN : this.nodeN[l]!;
      const tArray = l === innermost ? this.leafT : this.nodeT[l]!;
      const dArray = this.nodeD[l]!;
      const psi = this.nodePsi[l]!;
      const psiScalar = this.nodePsiScalar[l]!;
      const residualOf = this.nodeResidual[l]!;
      const parentPsi = l > 0 ? this.nodePsi[l - 1]! : null;
      const parentPsiScalar = l > 0 ? this.nodePsiScalar[l - 1]! : null;
      const parents = levels.parents[l]!;
      let sumSquares = 0;
      let sumTrace = 0;
      let sumLeverage = 0;
      let sumSquaredTrace = 0;
      for (let g = 0; g < counts; g += 1) {
        const d = dArray[g]!;
        const inverseD = 1 / d;
        const n = nArray[g]!;
        const at = g * m;
        const parent = parentPsi === null ? -1 : parents[g]!;
        const parentAt = parent * m;
        const upScalar = parent < 0 ? 0 : parentPsiScalar![parent]!;
        psiScalar[g] = s * inverseD + upScalar * inverseD * inverseD;
        for (let a = 0; a < m; a += 1) {
          const up = parent < 0 ? 0 : parentPsi![parentAt + a]!;
          const t = tArray[at + a]!;
          psi[at + a] = (s * t + up) * inverseD;
          fullRow[a] = (t - n * up) * inverseD;
        }
        const e = n * inverseD;
        const own = e - e * e * upScalar;
        sumTrace += own;
        let residual = fullRow[p]!;
        for (let a = 0; a < p; a += 1) residual -= fullRow[a]! * beta[a]!;
        residualOf[g] = residual;
        sumSquares += residual * residual;
        if (this.kind === "reml") {
          let quadratic = 0;
          for (let a = 0; a < p; a += 1) {
            let inner = 0;
            for (let b = 0; b < p; b += 1) inner += inverse[a * p + b]! * fullRow[b]!;
            quadratic += fullRow[a]! * inner;
          }
          sumLeverage += quadratic;
          sumSquaredTrace += (own - quadratic) * (own - quadratic);
        } else {
          sumSquaredTrace += own * own;
        }
      }
      this.score[l] = 0.5 * (sumSquares - sumTrace + sumLeverage);
      this.diagonalInformation[l] = 0.5 * sumSquaredTrace;
    }
  }

  /**
   * AI_lm = 1/2 q_l'P q_m: the bottom-up recursion again, on the columns [X, q_1..q_L]. q_l is
   * constant within each innermost group, so its leaf sums are the group residual times n or t.
   */
  private averageInformationPass(): void {
    const { p, levels } = this.problem;
    const depth = this.depth;
    const m = this.columns;
    const width = p + depth;
    const innermost = depth - 1;
    const innerCount = levels.groupCounts[innermost]!;
    const gram = this.wideGram;
    gram.fill(0);
    // q_l is constant within an innermost group: its leaf sum is the group residual times n, and
    // its scatter within the group (and with X) is 0, so the within scatter is that of X alone.
    for (let a = 0; a < p; a += 1) for (let b = 0; b <= a; b += 1) gram[a * width + b] = this.leafScatter[a * m + b]!;
    const tInner = this.wideT[innermost]!;
    for (let g = 0; g < innerCount; g += 1) {
      const n = this.leafN[g]!;
      const at = g * m;
      const wideAt = g * width;
      for (let a = 0; a < p; a += 1) tInner[wideAt + a] = this.leafT[at + a]!;
      for (let l = 0; l < depth; l += 1) tInner[wideAt + p + l] = this.nodeResidual[l]![this.innermostAncestor[l]![g]!]! * n;
    }
    this.bottomUp(width, this.wideT, tInner, gram);
    const inverse = this.inverse;
    for (let l = 0; l < depth; l += 1) {
      for (let j = 0; j <= l; j += 1) {
        let correction = 0;
        for (let a = 0; a < p; a += 1) {
          let inner = 0;
          for (let b = 0; b < p; b += 1) inner += inverse[a * p + b]! * gram[(p + j) * width + b]!;
          correction += gram[(p + l) * width + a]! * inner;
        }
        const value = 0.5 * (gram[(p + l) * width + p + j]! - correction);
        this.averageInformation[l * depth + j] = value;
        this.averageInformation[j * depth + l] = value;
      }
    }
  }

  /**
   * Per-estimate rows of V^{-1} [X, 1] at the last evaluation (k x (p + 1), row-major), for
   * weights, leverages and diagnostics: (V^{-1}c)_i = (c_i - psi_g) / v_i, g the innermost group.
   * Reuses d_g of the last evaluation and makes one O(k) pass.
   */
  inverseTimesDesignRows(): Float64Array {
    const { k, p, levels, design, variances } = this.problem;
    const depth = this.depth;
    const width = p + 1;
    const innermost = depth - 1;
    const innerCount = levels.groupCounts[innermost]!;
    // Bottom-up sums for [X, 1]: the X part is the leaf t already known, the 1 part is n.
    const tLevels: Float64Array[] = [];
    let tInner = new Float64Array(innerCount * width);
    for (let g = 0; g < innerCount; g += 1) {
      for (let a = 0; a < p; a += 1) tInner[g * width + a] = this.leafT[g * (p + 1) + a]!;
      tInner[g * width + p] = this.leafN[g]!;
    }
    tLevels[innermost] = tInner;
    for (let l = innermost; l > 0; l -= 1) {
      const parentT = new Float64Array(levels.groupCounts[l - 1]! * width);
      const dArray = this.nodeD[l]!;
      const parents = levels.parents[l]!;
      for (let g = 0; g < levels.groupCounts[l]!; g += 1) {
        const inverseD = 1 / dArray[g]!;
        const parentAt = parents[g]! * width;
        for (let a = 0; a < width; a += 1) parentT[parentAt + a] += tInner[g * width + a]! * inverseD;
      }
      tLevels[l - 1] = parentT;
      tInner = parentT;
    }
    // Top-down psi for [X, 1].
    let parentPsi: Float64Array | null = null;
    for (let l = 0; l < depth; l += 1) {
      const s = this.sigma2[l]!;
      const counts = levels.groupCounts[l]!;
      const psi = new Float64Array(counts * width);
      const dArray = this.nodeD[l]!;
      const parents = levels.parents[l]!;
      const t = tLevels[l]!;
      for (let g = 0; g < counts; g += 1) {
        const inverseD = 1 / dArray[g]!;
        const parentAt = parentPsi === null ? -1 : parents[g]! * width;
        for (let a = 0; a < width; a += 1) psi[g * width + a] = (s * t[g * width + a]! + (parentAt < 0 ? 0 : parentPsi![parentAt + a]!)) * inverseD;
      }
      parentPsi = psi;
    }
    const rows = new Float64Array(k * width);
    const rowGroup = levels.rowGroups[innermost]!;
    for (let i = 0; i < k; i += 1) {
      const g = rowGroup[i]!;
      const inverseV = 1 / variances[i]!;
      for (let a = 0; a < p; a += 1) rows[i * width + a] = (design[i * p + a]! - parentPsi![g * width + a]!) * inverseV;
      rows[i * width + p] = (1 - parentPsi![g * width + p]!) * inverseV;
    }
    return rows;
  }
}
