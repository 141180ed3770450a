/**
 * Centring a design's columns on its intercept before weighted normal equations are formed.
 *
 * References:
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., section 5.3 (the normal
 *   equations square the condition number of X).
 * - Marquardt, D. W. (1980). You should standardize the predictor variables in your regression
 *   models. Journal of the American Statistical Association 75: 87-91. (centring removes the
 *   ill-conditioning that a predictor's offset from 0 adds)
 * - Sterbenz, P. H. (1974). Floating-Point Computation. Prentice-Hall. (x - s is exact when
 *   s / 2 <= x <= 2 s)
 * - Higham, N. J. (2002). Accuracy and Stability of Numerical Algorithms, 2nd ed. SIAM, ch. 10.
 *   (Cholesky's error depends on the condition of the diagonally scaled matrix)
 *
 * A column x = m + d with |m| much larger than its spread |d| makes X'WX nearly singular: the
 * column's Cholesky pivot is the difference of two numbers of size m^2 and loses about
 * 2 log10(|m| / |d|) digits (x = 100 +- 1e-4 loses 12). Subtracting a fixed shift s_j (the
 * column's mean) from every value first removes that loss: for values near s_j the subtraction is
 * exact, so the shifted design X' = X - 1 s' is the stored data, reparametrised. With column k
 * all ones, X' = X M for the unit triangular M = I - e_k s' (s_k = 0), hence
 *   b = M b'   (b_k = b'_k - sum_j s_j b'_j, the other coefficients unchanged),
 *   (X'WX)^-1 = M (X''WX')^-1 M'.
 *
 * Only columns after the intercept column are shifted: each then differs from its original by a
 * multiple of an earlier column, so the columns up to any j span the same space as before and a
 * column-by-column Cholesky names the same dependent column. Columns holding a zero are left as
 * they are, so sparse routes stay sparse: a column holding 0 lies at most sqrt(n) root-mean-square
 * deviations from 0 (n rows), which costs at most log10(n + 1) digits. Scaling the columns as
 * well is not needed: Cholesky's accuracy does not depend on the columns' scale (Higham 2002).
 */
import type { DesignMatrix } from "./design-matrix";

export interface ColumnCentring {
  /** The all-ones column the others are centred on. */
  readonly interceptColumn: number;
  /** Subtracted from each column's values before cross products are formed; 0 where a column is left as it is. */
  readonly shift: Float64Array;
}

const cache = new WeakMap<object, ColumnCentring | null>();

/**
 * The centring of a design: its first all-ones column (for a declared factor-plus-covariates
 * design, column 0) and the mean of every later column without a zero entry. Null when the design
 * has no intercept column or no column to shift. Computed once per design (designs are immutable,
 * see row-sparsity.ts) and cached.
 * Example: columns intercept, x with x = [99, 100, 101] give interceptColumn 0, shift [0, 100].
 */
export function columnCentring(design: DesignMatrix): ColumnCentring | null {
  const structure = design.factorStructure;
  const key: object = structure ?? design.data;
  const cached = cache.get(key);
  if (cached !== undefined) return cached;
  const { rows, columns } = design;
  const shift = new Float64Array(columns);
  const interceptColumn = interceptColumnOf(design);
  if (structure) {
    // Intercept first, then the 0/1 dummies (each holds zeros), then the covariates.
    const { covariateCount: p, covariateValues: x } = structure;
    for (let j = 0; j < p; j += 1) shift[structure.levels + j] = meanWithoutZeros(x, j, p, rows);
  } else {
    for (let j = interceptColumn + 1; interceptColumn >= 0 && j < columns; j += 1) shift[j] = meanWithoutZeros(design.data, j, columns, rows);
  }
  const centring = interceptColumn >= 0 && shift.some((s) => s !== 0) ? { interceptColumn, shift } : null;
  cache.set(key, centring);
  return centring;
}

/** The first column whose every value is 1 (0 for a declared factor-plus-covariates design), or -1. */
export function interceptColumnOf(design: DesignMatrix): number {
  if (design.factorStructure) return 0;
  const { rows, columns, data } = design;
  for (let j = 0; j < columns; j += 1) {
    let allOnes = true;
    for (let i = 0; i < rows && allOnes; i += 1) allOnes = data[i * columns + j] === 1;
    if (allOnes) return j;
  }
  return -1;
}

/** The mean of column `column` of a row-major array, or 0 when some entry is 0. */
function meanWithoutZeros(values: Float64Array, column: number, width: number, rows: number): number {
  let sum = 0;
  for (let i = 0; i < rows; i += 1) {
    const x = values[i * width + column]!;
    if (x === 0) return 0;
    sum += x;
  }
  return rows > 0 ? sum / rows : 0;
}

/**
 * X' b' = (X - 1 shift') b' for coefficients b' of the centred design, each value shifted before
 * it is multiplied: the terms stay of the size of the deviations, so no rounding of large terms
 * that cancel (b0 + b1 x with b0 = -b1 x near 1e6) enters the result. Reads `design.data`.
 */
export function centredLinearPredictor(design: DesignMatrix, centring: ColumnCentring, coefficients: ArrayLike<number>): Float64Array {
  const { rows, columns, data } = design;
  const { shift } = centring;
  const result = new Float64Array(rows);
  for (let i = 0; i < rows; i += 1) {
    const offset = i * columns;
    let sum = 0;
    for (let j = 0; j < columns; j += 1) {
      const x = data[offset + j]!;
      if (x !== 0) sum += (x - shift[j]!) * coefficients[j]!;
    }
    result[i] = sum;
  }
  return result;
}

/** b = M b': the coefficients of the original columns from those of the centred ones (in place). */
export function uncentreCoefficients(centring: ColumnCentring, coefficients: Float64Array): Float64Array {
  const { interceptColumn, shift } = centring;
  let offset = 0;
  for (let j = 0; j < coefficients.length; j += 1) offset += shift[j]! * coefficients[j]!;
  coefficients[interceptColumn] = coefficients[interceptColumn]! - offset;
  return coefficients;
}

/**
 * M V M': the inverse (or covariance) of the original coefficients from that of the centred ones
 * (in place; V is p x p row-major and symmetric). With g = V s and q = s' V s, only the intercept's
 * row and column change: [k,k] = V_kk - 2 g_k + q, [k,j] = [j,k] = V_kj - g_j.
 */
export function uncentreInverse(centring: ColumnCentring, inverse: Float64Array): Float64Array {
  const { interceptColumn: k, shift } = centring;
  const size = shift.length;
  const g = new Float64Array(size);
  let q = 0;
  for (let j = 0; j < size; j += 1) {
    let sum = 0;
    for (let l = 0; l < size; l += 1) sum += inverse[j * size + l]! * shift[l]!;
    g[j] = sum;
    q += shift[j]! * sum;
  }
  const interceptVariance = inverse[k * size + k]! - 2 * g[k]! + q;
  for (let j = 0; j < size; j += 1) {
    if (j === k) continue;
    const value = inverse[k * size + j]! - g[j]!;
    inverse[k * size + j] = value;
    inverse[j * size + k] = value;
  }
  inverse[k * size + k] = interceptVariance;
  return inverse;
}
