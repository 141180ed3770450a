/**
 * Weighted normal equations X'WX b = X'Wz for a design of one factor (treatment contrasts) plus
 * dense covariates, solved through the Schur complement of the factor block.
 *
 * References:
 * - Searle, S. R. (1971). Linear Models. Wiley, sections 7.1-7.2 (absorbing a factor: normal
 *   equations of one-way classification plus covariates).
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., section 3.2.10 (block
 *   elimination and the Schur complement).
 *
 * With the factor in cell-means form (one indicator per level), X'WX is an arrow matrix
 *   [ D   B ]    D = diag(sum of w over each level's rows),  B = per-level sums of w x,
 *   [ B'  C ]    C = X_c' W X_c over the covariates,
 * so one pass over the rows forms it in O(n p^2) and the solve costs O(q p^2 + p^3) for q levels
 * (the inverse, when asked for, O(q^2 p)): the covariates from S = C - B' D^-1 B, the levels by
 * back-substitution. The result is mapped to the design's treatment contrasts (intercept =
 * reference level, dummies = differences from it), which span the same space, so coefficients
 * and the inverse agree with the dense solve.
 * Rank deficiency is judged as a column-by-column Cholesky of the treatment-contrast X'WX would
 * judge it (same pivots, same relative tolerance), and reported by the same column index.
 */
import { choleskyFactor, choleskyInverse, choleskySolve } from "./cholesky";
import type { FactorCovariateStructure } from "./design-matrix";
import type { NormalEquationsOutcome } from "./weighted-normal-equations";

/**
 * Solves X'WX b = X'Wz for a design with the given structure, weights w and working response z
 * (one entry per row each; weights >= 0). `relativeTolerance` is the Cholesky pivot test of
 * choleskyFactor. `covariateShift` (one entry per covariate, see column-centring.ts) is subtracted
 * from each covariate's values first: the solution is then that of the shifted design, whose
 * intercept is the reference level's linear predictor at covariates equal to the shift. Returns
 * the coefficients in the design's column order with the inverse on demand, or the first
 * dependent column. Never throws for valid structures.
 * Example: 2 levels, rows at levels [0, 0, 1, 1], one covariate [1, 2, 3, 5], unit weights and
 * z = [1, 2, 3, 4] give coefficients [0.6, 0.5, 0.6] (intercept, level-1 difference, slope).
 */
export function solveFactorBlockNormalEquations(
  structure: FactorCovariateStructure,
  weights: ArrayLike<number>,
  response: ArrayLike<number>,
  relativeTolerance = 1e-10,
  covariateShift: ArrayLike<number> = new Float64Array(structure.covariateCount),
): NormalEquationsOutcome {
  const { levels, levelOfRow, covariateCount: p, covariateValues: x } = structure;
  const rows = levelOfRow.length;
  const levelWeight = new Float64Array(levels);
  const levelRhs = new Float64Array(levels);
  const levelCross = new Float64Array(levels * p);
  const covariateCross = new Float64Array(p * p);
  const covariateRhs = new Float64Array(p);
  if (p === 2) accumulateTwoCovariates(levelOfRow, x, covariateShift, weights, response, levelWeight, levelRhs, levelCross, covariateCross, covariateRhs);
  else {
    const row = new Float64Array(p);
    for (let i = 0; i < rows; i += 1) {
      const level = levelOfRow[i]!;
      const w = weights[i]!;
      const wz = w * response[i]!;
      levelWeight[level] += w;
      levelRhs[level] += wz;
      const offset = i * p;
      const crossOffset = level * p;
      for (let j = 0; j < p; j += 1) row[j] = x[offset + j]! - covariateShift[j]!;
      for (let j = 0; j < p; j += 1) {
        const xj = row[j]!;
        const wxj = w * xj;
        levelCross[crossOffset + j] += wxj;
        covariateRhs[j] += xj * wz;
        for (let l = 0; l <= j; l += 1) covariateCross[j * p + l] += wxj * row[l]!;
      }
    }
  }
  for (let j = 0; j < p; j += 1) for (let l = 0; l < j; l += 1) covariateCross[l * p + j] = covariateCross[j * p + l]!;

  const dependent = dependentFactorColumn(levelWeight, relativeTolerance);
  if (dependent >= 0) return { ok: false, column: dependent };

  // H = D^-1 B; S = C - B' H; r = X_c'Wz - H' u.
  const spread = new Float64Array(levels * p);
  const schur = Float64Array.from(covariateCross);
  const reducedRhs = Float64Array.from(covariateRhs);
  for (let k = 0; k < levels; k += 1) {
    const d = levelWeight[k]!;
    for (let j = 0; j < p; j += 1) spread[k * p + j] = levelCross[k * p + j]! / d;
    for (let j = 0; j < p; j += 1) {
      const h = spread[k * p + j]!;
      reducedRhs[j] -= h * levelRhs[k]!;
      for (let l = 0; l < p; l += 1) schur[j * p + l] -= h * levelCross[k * p + l]!;
    }
  }
  // Symmetric to rounding; use one triangle so the factor sees an exactly symmetric matrix.
  for (let j = 0; j < p; j += 1) for (let l = 0; l < j; l += 1) schur[l * p + j] = schur[j * p + l]!;
  const diagonal = new Float64Array(p);
  for (let j = 0; j < p; j += 1) diagonal[j] = covariateCross[j * p + j]!;
  const factored = choleskyFactor(schur, p, relativeTolerance, diagonal);
  if (!factored.ok) return { ok: false, column: levels + factored.column };
  const slopes = choleskySolve(factored.factor, reducedRhs);

  const columns = levels + p;
  const coefficients = new Float64Array(columns);
  // The reference level's coefficient (the intercept), then each level's difference from it.
  let reference = levelRhs[0]! / levelWeight[0]!;
  for (let j = 0; j < p; j += 1) reference -= spread[j]! * slopes[j]!;
  coefficients[0] = reference;
  for (let k = 1; k < levels; k += 1) {
    let difference = levelRhs[k]! / levelWeight[k]! - levelRhs[0]! / levelWeight[0]!;
    for (let j = 0; j < p; j += 1) difference -= (spread[k * p + j]! - spread[j]!) * slopes[j]!;
    coefficients[k] = difference;
  }
  for (let j = 0; j < p; j += 1) coefficients[levels + j] = slopes[j]!;

  const inverse = (): Float64Array => {
    const schurInverse = choleskyInverse(factored.factor);
    // With e_k = H_k - H_0 (k >= 1) and g = H S^-1, the treatment-contrast inverse is
    //   [0,0] = 1/D_0 + g_0 . H_0,   [0,k] = -1/D_0 + g_0 . e_k,   [k,m] = [k = m]/D_k + 1/D_0 + (e_k S^-1) . e_m,
    //   [0,c_j] = -g_0j,   [k,c_j] = -(e_k S^-1)_j,   [c_j,c_l] = S^-1_jl.
    const shifted = new Float64Array(levels * p); // row 0: g_0; row k >= 1: e_k S^-1
    const difference = new Float64Array(levels * p); // row 0: H_0; row k >= 1: e_k
    for (let k = 0; k < levels; k += 1) {
      for (let j = 0; j < p; j += 1) difference[k * p + j] = k === 0 ? spread[j]! : spread[k * p + j]! - spread[j]!;
    }
    for (let k = 0; k < levels; k += 1) {
      for (let l = 0; l < p; l += 1) {
        let sum = 0;
        for (let j = 0; j < p; j += 1) sum += difference[k * p + j]! * schurInverse[j * p + l]!;
        shifted[k * p + l] = sum;
      }
    }
    const result = new Float64Array(columns * columns);
    const referenceVariance = 1 / levelWeight[0]!;
    const dot = (a: number, b: number) => {
      let sum = 0;
      for (let j = 0; j < p; j += 1) sum += shifted[a * p + j]! * difference[b * p + j]!;
      return sum;
    };
    result[0] = referenceVariance + dot(0, 0);
    for (let k = 1; k < levels; k += 1) {
      const value = -referenceVariance + dot(0, k);
      result[k] = value;
      result[k * columns] = value;
      for (let m = 1; m <= k; m += 1) {
        const entry = (k === m ? 1 / levelWeight[k]! : 0) + referenceVariance + dot(k, m);
        result[k * columns + m] = entry;
        result[m * columns + k] = entry;
      }
    }
    for (let k = 0; k < levels; k += 1) {
      for (let j = 0; j < p; j += 1) {
        const value = -shifted[k * p + j]!;
        result[k * columns + levels + j] = value;
        result[(levels + j) * columns + k] = value;
      }
    }
    for (let j = 0; j < p; j += 1) for (let l = 0; l < p; l += 1) result[(levels + j) * columns + levels + l] = schurInverse[j * p + l]!;
    return result;
  };
  return { ok: true, solution: { coefficients, inverse } };
}

/**
 * The row pass of solveFactorBlockNormalEquations for two covariates (a term and its square, the
 * common case), with the covariate sums in registers: the same sums in the same order as the
 * general loop, about twice as fast.
 */
function accumulateTwoCovariates(
  levelOfRow: Int32Array,
  x: Float64Array,
  shift: ArrayLike<number>,
  weights: ArrayLike<number>,
  response: ArrayLike<number>,
  levelWeight: Float64Array,
  levelRhs: Float64Array,
  levelCross: Float64Array,
  covariateCross: Float64Array,
  covariateRhs: Float64Array,
): void {
  let c00 = 0;
  let c10 = 0;
  let c11 = 0;
  let r0 = 0;
  let r1 = 0;
  const s0 = shift[0]!;
  const s1 = shift[1]!;
  for (let i = 0; i < levelOfRow.length; i += 1) {
    const level = levelOfRow[i]!;
    const w = weights[i]!;
    const wz = w * response[i]!;
    levelWeight[level] += w;
    levelRhs[level] += wz;
    const x0 = x[2 * i]! - s0;
    const x1 = x[2 * i + 1]! - s1;
    const wx0 = w * x0;
    const wx1 = w * x1;
    levelCross[2 * level] += wx0;
    levelCross[2 * level + 1] += wx1;
    r0 += x0 * wz;
    r1 += x1 * wz;
    c00 += wx0 * x0;
    c10 += wx1 * x0;
    c11 += wx1 * x1;
  }
  covariateCross[0] = c00;
  covariateCross[2] = c10;
  covariateCross[3] = c11;
  covariateRhs[0] = r0;
  covariateRhs[1] = r1;
}

/**
 * The first factor column (intercept 0, dummy k) a Cholesky of the treatment-contrast block would
 * call dependent, or -1. Its pivots are known in closed form from the level weights D: the
 * intercept's is sum D; dummy k's is D_k (R_k - D_k) / R_k with R_k = D_0 + sum_{j >= k} D_j
 * (the weighted residual of dummy k after the intercept and the earlier dummies).
 */
function dependentFactorColumn(levelWeight: Float64Array, relativeTolerance: number): number {
  const levels = levelWeight.length;
  // after[k] = D_0 + sum_{j > k} D_j = R_k - D_k, accumulated from the last level down.
  const after = new Float64Array(levels);
  let tail = 0;
  for (let k = levels - 1; k >= 1; k -= 1) {
    after[k] = levelWeight[0]! + tail;
    tail += levelWeight[k]!;
  }
  const total = levelWeight[0]! + tail;
  if (!(total > 0)) return 0;
  for (let k = 1; k < levels; k += 1) {
    const weight = levelWeight[k]!;
    if (!(weight > 0) || !(after[k]! > relativeTolerance * (after[k]! + weight))) return k;
  }
  // Level 0 itself is covered by the last dummy: with D_0 = 0 its R - D vanishes.
  return -1;
}
