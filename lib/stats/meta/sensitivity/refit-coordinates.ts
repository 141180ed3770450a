/**
 * A refit's coefficients and covariance carried into the internal (centred and scaled)
 * coordinates of the full fit, so that the two can be compared without the cancellation a
 * moderator far from zero (a year, an area in square metres) causes in the user's coding.
 *
 * References:
 * - Draper, N. R. & Smith, H. (1998). Applied Regression Analysis, 3rd ed., section 16.4
 *   (centring and scaling predictors).
 *
 * Each fit codes column j as z_j = (x_j - m_j) / s_j (design-conditioning.ts), so gamma = T beta
 * with gamma_j = s_j beta_j and gamma_0 = beta_0 + sum_j m_j beta_j (0 the intercept column).
 * From the refit's coordinates (m', s') to the full fit's (m, s): gamma = M gamma' with
 *   M_jj = s_j / s'_j,  M_0j = (m_j - m'_j) / s'_j,  M_00 = 1,
 * formed from the differences of the centres, never from the user's-scale coefficients.
 */
import type { LinearPredictor } from "../meta-result";

export interface CoordinatesOfFit {
  /** The refit's coefficients in the full fit's internal coordinates. */
  readonly coefficients: Float64Array;
  /** Their covariance (under the refit's test), p x p row-major. */
  readonly covariance: Float64Array;
}

/**
 * Input: two fits of the same design columns (the refit on a subset of the rows).
 * Returns the refit's internal coefficients and covariance re-expressed in `full`'s coordinates.
 * Throws Error when the designs' columns differ (a defect in the caller).
 * Example: for an intercept-only model M = [1], so the refit's values come back unchanged.
 */
export function inFullCoordinates(full: LinearPredictor, refit: LinearPredictor): CoordinatesOfFit {
  const p = full.columnNames.length;
  if (refit.columnNames.length !== p || refit.interceptColumn !== full.interceptColumn) {
    throw new Error("internal: a refit must have the same design columns as the full fit");
  }
  const intercept = full.interceptColumn;
  const transform = new Float64Array(p * p);
  for (let j = 0; j < p; j += 1) {
    if (j === intercept) {
      transform[j * p + j] = 1;
      continue;
    }
    transform[j * p + j] = full.scales[j]! / refit.scales[j]!;
    if (intercept >= 0) transform[intercept * p + j] = (full.centres[j]! - refit.centres[j]!) / refit.scales[j]!;
  }
  const coefficients = new Float64Array(p);
  const half = new Float64Array(p * p);
  for (let a = 0; a < p; a += 1) {
    let sum = 0;
    for (let b = 0; b < p; b += 1) {
      sum += transform[a * p + b]! * refit.coefficients[b]!;
      let entry = 0;
      for (let c = 0; c < p; c += 1) entry += transform[a * p + c]! * refit.covariance[c * p + b]!;
      half[a * p + b] = entry;
    }
    coefficients[a] = sum;
  }
  const covariance = new Float64Array(p * p);
  for (let a = 0; a < p; a += 1) {
    for (let b = 0; b < p; b += 1) {
      let sum = 0;
      for (let c = 0; c < p; c += 1) sum += half[a * p + c]! * transform[b * p + c]!;
      covariance[a * p + b] = sum;
    }
  }
  return { coefficients, covariance };
}

/** x' a for a row and a vector of length p. */
export function dot(row: ArrayLike<number>, vector: ArrayLike<number>): number {
  let sum = 0;
  for (let j = 0; j < row.length; j += 1) sum += row[j]! * vector[j]!;
  return sum;
}

/** x' A x for a p x p row-major matrix. */
export function quadraticForm(row: ArrayLike<number>, matrix: ArrayLike<number>): number {
  const p = row.length;
  let sum = 0;
  for (let a = 0; a < p; a += 1) for (let b = 0; b < p; b += 1) sum += row[a]! * matrix[a * p + b]! * row[b]!;
  return sum;
}

/** How a refit without some studies predicts at one design row, against the full fit. */
export interface DeletionComparison {
  /** x_i' beta of the full fit. */
  readonly fitted: number;
  /** x_i' beta of the refit. */
  readonly fittedDeleted: number;
  /** x_i' Cov(beta of the refit) x_i. */
  readonly varianceDeleted: number;
  readonly refit: CoordinatesOfFit;
}

/**
 * Compares the full fit and a refit at `conditionedRow` (a design row already in the full fit's
 * internal coordinates, from rowToConditionedScale). Example: intercept-only, row [1]: fitted is
 * the pooled estimate, fittedDeleted the pooled estimate without the deleted studies.
 */
export function compareAtRow(full: LinearPredictor, refit: LinearPredictor, conditionedRow: ArrayLike<number>): DeletionComparison {
  const mapped = inFullCoordinates(full, refit);
  return {
    fitted: dot(conditionedRow, full.coefficients),
    fittedDeleted: dot(conditionedRow, mapped.coefficients),
    varianceDeleted: quadraticForm(conditionedRow, mapped.covariance),
    refit: mapped,
  };
}
