/**
 * Internal centring and scaling of a meta-regression design, and the map back to the user's
 * coefficients. Moderators such as a year (about 2e3) or an area in square metres (1e8) make X'WX
 * span many orders of magnitude; fitting on centred, unit-scaled columns keeps the normal
 * equations well conditioned, and every reported quantity is transformed back exactly.
 *
 * References:
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., section 3.5.2 (scaling).
 * - Draper, N. R. & Smith, H. (1998). Applied Regression Analysis, 3rd ed., section 16.4
 *   (centring and scaling predictors in least squares).
 *
 * With an intercept column, column j becomes z_j = (x_j - m_j) / s_j (mean m_j, root mean square
 * deviation s_j); without one, z_j = x_j / s_j (root mean square s_j). So X = Z T, and with
 * y ~ Z gamma the user's coefficients are beta = T^{-1} gamma, Cov(beta) = T^{-1} Cov(gamma) T^{-T}.
 * Tau^2, Q, fitted values and every test of the moderators are unchanged by the transformation.
 */
import { interceptColumnOf } from "../linear/column-centring";
import type { DesignMatrix } from "../linear/design-matrix";
import { choleskyFactor, choleskyLogDeterminant, choleskySolve } from "../linear/cholesky";
import { crossProductKernel, kernelOutputLength, unpackLowerTriangle } from "./cross-product-kernel";
import { ModelInputError } from "../model-error";

/** A pivot below this fraction of its diagonal (on unit-scaled columns) means linear dependence. */
const DEPENDENCE_TOLERANCE = 1e-10;
/** Above dependence but below this, the design is nearly collinear: fitted, with a warning. */
export const ILL_CONDITIONED_PIVOT = 1e-8;

export interface ConditionedDesign {
  readonly rows: number;
  readonly columns: number;
  readonly columnNames: readonly string[];
  /** Z, row-major rows x columns. */
  readonly data: Float64Array;
  /** m_j (0 for the intercept and for every column when there is no intercept). */
  readonly centres: Float64Array;
  /** s_j (1 for the intercept). */
  readonly scales: Float64Array;
  /** Index of the all-ones column, or -1. */
  readonly interceptColumn: number;
  /** min_j of pivot_j^2 / (Z'Z)_jj in the Cholesky factor of Z'Z: 1 for orthogonal columns. */
  readonly smallestPivotRatio: number;
  /** log det Z'Z. */
  readonly logDetGram: number;
}

function quote(name: string): string {
  return `'${name}'`;
}

function listNames(names: readonly string[]): string {
  if (names.length <= 1) return names.join("");
  return `${names.slice(0, -1).join(", ")} and ${names[names.length - 1]}`;
}

/**
 * Names the earlier columns that column `dependent` is (numerically) a combination of. The
 * combination is found on the conditioned columns and read back in the user's coding, so that the
 * intercept is named when the relation has a constant term (x2 = 32 + 1.8 x1).
 */
function collinearityMessage(gram: Float64Array, size: number, dependent: number, names: readonly string[], centres: Float64Array, scales: Float64Array, interceptColumn: number): string {
  const lead = new Float64Array(dependent * dependent);
  const target = new Float64Array(dependent);
  for (let a = 0; a < dependent; a += 1) {
    target[a] = gram[a * size + dependent]!;
    for (let b = 0; b < dependent; b += 1) lead[a * dependent + b] = gram[a * size + b]!;
  }
  const partners = new Set<number>();
  const factor = dependent > 0 ? choleskyFactor(lead, dependent, DEPENDENCE_TOLERANCE) : undefined;
  if (factor?.ok) {
    const combination = choleskySolve(factor.factor, target);
    // Columns are unit-scaled, so coefficients of a real dependence are of order one.
    for (let a = 0; a < dependent; a += 1) if (Math.abs(combination[a]!) > 1e-6) partners.add(a);
    if (interceptColumn >= 0 && interceptColumn < dependent) {
      // Constant term of x_dep = const + sum_a (s_dep c_a / s_a) x_a in the user's coding.
      let constant = centres[dependent]! + scales[dependent]! * combination[interceptColumn]!;
      for (let a = 0; a < dependent; a += 1) if (a !== interceptColumn) constant -= (scales[dependent]! * combination[a]! * centres[a]!) / scales[a]!;
      if (Math.abs(constant) > 1e-6 * (Math.abs(centres[dependent]!) + scales[dependent]!)) partners.add(interceptColumn);
      else partners.delete(interceptColumn);
    }
  }
  const named = [...partners].sort((a, b) => a - b).map((a) => quote(names[a]!));
  const which = named.length > 0 ? listNames(named) : "the terms before it";
  return `the moderators are collinear (the design is rank-deficient): ${quote(names[dependent]!)} is a linear combination of ${which}; remove one of these terms`;
}

/**
 * Centres and scales the columns of `design` (see the module comment) and checks its rank.
 * Constraints: finite entries, rows >= 1. Returns the conditioned copy; `design` is not changed.
 * Throws ModelInputError naming the collinear terms when a column is constant (with an intercept),
 * identically zero, or a linear combination of earlier columns.
 * Example: conditionDesign(X with columns intercept, year = [2001, 2002, 2003]) has
 * centres [0, 2002], scales [1, sqrt(2/3)].
 */
export function conditionDesign(design: DesignMatrix): ConditionedDesign {
  const { rows, columns, data, columnNames } = design;
  const interceptColumn = interceptColumnOf(design);
  const centred = interceptColumn >= 0;
  // One column at a time with scalar accumulators (V8 keeps those in registers): the mean, then
  // the first two moments of the deviations from it.
  const centres = new Float64Array(columns);
  const scales = new Float64Array(columns).fill(1);
  const firstMoment = new Float64Array(columns);
  const secondMoment = new Float64Array(columns);
  for (let j = 0; j < columns; j += 1) {
    if (j === interceptColumn) continue;
    let sum = 0;
    if (centred) for (let i = 0; i < rows; i += 1) sum += data[i * columns + j]!;
    const centre = sum / rows;
    let first = 0;
    let second = 0;
    for (let i = 0; i < rows; i += 1) {
      const deviation = data[i * columns + j]! - centre;
      first += deviation;
      second += deviation * deviation;
    }
    centres[j] = centre;
    firstMoment[j] = first;
    secondMoment[j] = second;
  }
  for (let j = 0; j < columns; j += 1) {
    if (j === interceptColumn) continue;
    // The mean of the deviations corrects the centre for digits lost to a large common offset.
    const correction = centred ? firstMoment[j]! / rows : 0;
    const scale = Math.sqrt(Math.max(0, secondMoment[j]! / rows - correction * correction));
    const centre = centres[j]! + correction;
    if (!(scale > 0) || scale <= Math.abs(centre) * 1e-14) {
      const reason = centred
        ? `${quote(columnNames[j]!)} has the same value in every study, so it is collinear with the intercept; remove it`
        : `${quote(columnNames[j]!)} is zero in every study; remove it`;
      throw new ModelInputError(`the moderators are collinear (the design is rank-deficient): ${reason}`);
    }
    centres[j] = centre;
    scales[j] = scale;
  }
  const conditioned = new Float64Array(rows * columns);
  const inverseScales = scales.map((scale) => 1 / scale);
  for (let i = 0; i < rows; i += 1) {
    const offset = i * columns;
    for (let j = 0; j < columns; j += 1) conditioned[offset + j] = (data[offset + j]! - centres[j]!) * inverseScales[j]!;
  }
  const ones = new Float64Array(rows).fill(1);
  const sums = new Float64Array(kernelOutputLength(columns));
  crossProductKernel(columns, 0)(conditioned, rows, ones, ones, ones, sums);
  const gram = new Float64Array(columns * columns);
  unpackLowerTriangle(sums.subarray(2 + columns), gram, columns);
  const outcome = choleskyFactor(gram, columns, DEPENDENCE_TOLERANCE);
  if (!outcome.ok) throw new ModelInputError(collinearityMessage(gram, columns, outcome.column, columnNames, centres, scales, interceptColumn));
  let smallestPivotRatio = 1;
  for (let j = 0; j < columns; j += 1) {
    const ratio = outcome.factor.lower[j * columns + j]! ** 2 / gram[j * columns + j]!;
    if (ratio < smallestPivotRatio) smallestPivotRatio = ratio;
  }
  const logDetGram = choleskyLogDeterminant(outcome.factor);
  return { rows, columns, columnNames, data: conditioned, centres, scales, interceptColumn, smallestPivotRatio, logDetGram };
}

/** T^{-1} as a p x p row-major matrix: beta = T^{-1} gamma. */
function inverseTransform(conditioning: ConditionedDesign): Float64Array {
  const { columns, centres, scales, interceptColumn } = conditioning;
  const matrix = new Float64Array(columns * columns);
  for (let j = 0; j < columns; j += 1) {
    matrix[j * columns + j] = 1 / scales[j]!;
    if (interceptColumn >= 0 && j !== interceptColumn) matrix[interceptColumn * columns + j] = -centres[j]! / scales[j]!;
  }
  return matrix;
}

/** The user's coefficients beta = T^{-1} gamma from the conditioned ones. */
export function coefficientsToOriginalScale(conditioning: ConditionedDesign, conditioned: ArrayLike<number>): Float64Array {
  const p = conditioning.columns;
  const transform = inverseTransform(conditioning);
  const result = new Float64Array(p);
  for (let a = 0; a < p; a += 1) {
    let sum = 0;
    for (let b = 0; b < p; b += 1) sum += transform[a * p + b]! * conditioned[b]!;
    result[a] = sum;
  }
  return result;
}

/** Cov(beta) = T^{-1} Cov(gamma) T^{-T}, p x p row-major. */
export function covarianceToOriginalScale(conditioning: ConditionedDesign, conditioned: ArrayLike<number>): Float64Array {
  const p = conditioning.columns;
  const transform = inverseTransform(conditioning);
  const half = new Float64Array(p * p);
  for (let a = 0; a < p; a += 1) {
    for (let c = 0; c < p; c += 1) {
      let sum = 0;
      for (let b = 0; b < p; b += 1) sum += transform[a * p + b]! * conditioned[b * p + c]!;
      half[a * p + c] = sum;
    }
  }
  const result = new Float64Array(p * p);
  for (let a = 0; a < p; a += 1) {
    for (let c = 0; c < p; c += 1) {
      let sum = 0;
      for (let b = 0; b < p; b += 1) sum += half[a * p + b]! * transform[c * p + b]!;
      result[a * p + c] = sum;
    }
  }
  return result;
}

/**
 * A design row in the user's coding (x0) in conditioned coordinates, z0 = T^{-T} x0, so that
 * x0' beta = z0' gamma is computed without cancellation far from the data's origin.
 */
export function rowToConditionedScale(
  conditioning: { readonly columns: number; readonly centres: ArrayLike<number>; readonly scales: ArrayLike<number>; readonly interceptColumn: number },
  row: ArrayLike<number>,
): Float64Array {
  const { columns, centres, scales, interceptColumn } = conditioning;
  const interceptValue = interceptColumn >= 0 ? row[interceptColumn]! : 0;
  const result = new Float64Array(columns);
  for (let j = 0; j < columns; j += 1) {
    result[j] = j === interceptColumn ? row[j]! : (row[j]! - centres[j]! * interceptValue) / scales[j]!;
  }
  return result;
}
