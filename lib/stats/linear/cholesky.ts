/**
 * Cholesky factorisation of a small symmetric positive (semi-)definite matrix, with detection of
 * linear dependence, used to solve weighted normal equations X'WX b = X'Wy.
 *
 * References:
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., section 4.2.
 *
 * Matrices are p x p, row-major Float64Array. p is the number of coefficients (small), so the
 * O(p^3) work is negligible next to forming X'WX (O(n p^2)).
 */

export interface CholeskyFactor {
  readonly size: number;
  /** Lower-triangular factor L with A = L L', row-major; upper part is zero. */
  readonly lower: Float64Array;
}

export type CholeskyOutcome =
  | { ok: true; factor: CholeskyFactor }
  /** `column` (0-based) is, to working precision, a linear combination of the columns before it. */
  | { ok: false; column: number };

/**
 * Factorises A = L L'. A column whose remaining pivot falls below `relativeTolerance` times its
 * original diagonal is reported as dependent on the earlier columns (rank deficiency).
 * `referenceDiagonal` replaces A's own diagonal in that test: a Schur complement passes the
 * diagonal of the full matrix it was reduced from, so that its columns are judged as they would
 * be in the full factorisation.
 * Example: choleskyFactor(Float64Array.of(4, 2, 2, 3), 2) -> lower = [2, 0, 1, sqrt(2)].
 */
export function choleskyFactor(matrix: Float64Array, size: number, relativeTolerance = 1e-10, referenceDiagonal?: ArrayLike<number>): CholeskyOutcome {
  const lower = new Float64Array(size * size);
  for (let j = 0; j < size; j += 1) {
    let pivot = matrix[j * size + j]!;
    for (let k = 0; k < j; k += 1) pivot -= lower[j * size + k]! ** 2;
    const original = referenceDiagonal ? referenceDiagonal[j]! : matrix[j * size + j]!;
    if (!(original > 0) || !(pivot > relativeTolerance * original)) return { ok: false, column: j };
    const diagonal = Math.sqrt(pivot);
    lower[j * size + j] = diagonal;
    for (let i = j + 1; i < size; i += 1) {
      let sum = matrix[i * size + j]!;
      for (let k = 0; k < j; k += 1) sum -= lower[i * size + k]! * lower[j * size + k]!;
      lower[i * size + j] = sum / diagonal;
    }
  }
  return { ok: true, factor: { size, lower } };
}

/** Solves L L' x = b. */
export function choleskySolve(factor: CholeskyFactor, rhs: Float64Array): Float64Array {
  const { size, lower } = factor;
  const y = new Float64Array(size);
  for (let i = 0; i < size; i += 1) {
    let sum = rhs[i]!;
    for (let k = 0; k < i; k += 1) sum -= lower[i * size + k]! * y[k]!;
    y[i] = sum / lower[i * size + i]!;
  }
  const x = new Float64Array(size);
  for (let i = size - 1; i >= 0; i -= 1) {
    let sum = y[i]!;
    for (let k = i + 1; k < size; k += 1) sum -= lower[k * size + i]! * x[k]!;
    x[i] = sum / lower[i * size + i]!;
  }
  return x;
}

/** A^{-1} from its Cholesky factor, as a full symmetric row-major matrix. */
export function choleskyInverse(factor: CholeskyFactor): Float64Array {
  const { size } = factor;
  const inverse = new Float64Array(size * size);
  const unit = new Float64Array(size);
  for (let j = 0; j < size; j += 1) {
    unit.fill(0);
    unit[j] = 1;
    const column = choleskySolve(factor, unit);
    for (let i = 0; i < size; i += 1) inverse[i * size + j] = column[i]!;
  }
  return inverse;
}

/** log det A = 2 sum log L_jj. */
export function choleskyLogDeterminant(factor: CholeskyFactor): number {
  let sum = 0;
  for (let j = 0; j < factor.size; j += 1) sum += Math.log(factor.lower[j * factor.size + j]!);
  return 2 * sum;
}
