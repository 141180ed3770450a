import { choleskyFactor, choleskyInverse, choleskySolve } from "./cholesky";
import { columnCentring, uncentreCoefficients, uncentreInverse, type ColumnCentring } from "./column-centring";
import type { DesignMatrix } from "./design-matrix";
import { solveFactorBlockNormalEquations } from "./factor-block-normal-equations";
import { weightedCrossProducts } from "./weighted-cross-products";

/** The solution of one set of weighted normal equations, with the inverse on demand. */
export interface NormalEquationsSolution {
  /** b, one entry per design column. */
  readonly coefficients: Float64Array;
  /** (X'WX)^-1, columns x columns, row-major, symmetric. Computed on each call. */
  inverse(): Float64Array;
}

export type NormalEquationsOutcome =
  | { ok: true; solution: NormalEquationsSolution }
  /** `column` (0-based design column) is, to working precision, a combination of the columns before it. */
  | { ok: false; column: number };

/**
 * Solves the weighted normal equations X'WX b = X'Wz (weights w >= 0 and working response z, one
 * entry per row of `design`), by the route the design's declared structure allows: a design of
 * one factor plus covariates through the Schur complement of its factor block
 * (factor-block-normal-equations.ts), any other by a dense Cholesky factorisation of X'WX.
 * A design with an intercept column is solved with its other columns centred (column-centring.ts)
 * and the solution mapped back exactly, so a predictor far from 0 relative to its spread (x =
 * 100 +- 1e-4) keeps its digits. Both routes give the same coefficients and inverse to rounding
 * and report the same dependent column (Cholesky pivot below `relativeTolerance` times its
 * diagonal, in the centred columns).
 * Never throws for inputs of matching lengths.
 * Example: solveWeightedNormalEquations(designMatrix(2, ["x"], Float64Array.of(1, 2)), [1, 1], [1, 2])
 * gives coefficients [1] and inverse [0.2].
 */
export function solveWeightedNormalEquations(
  design: DesignMatrix,
  weights: ArrayLike<number>,
  response: ArrayLike<number>,
  relativeTolerance = 1e-10,
): NormalEquationsOutcome {
  const centring = columnCentring(design);
  const structure = design.factorStructure;
  const outcome = structure
    ? solveFactorBlockNormalEquations(structure, weights, response, relativeTolerance, centring?.shift.subarray(structure.levels))
    : solveDense(design, weights, response, relativeTolerance, centring);
  if (!outcome.ok || !centring) return outcome;
  const centred = outcome.solution;
  return { ok: true, solution: { coefficients: uncentreCoefficients(centring, centred.coefficients), inverse: () => uncentreInverse(centring, centred.inverse()) } };
}

function solveDense(design: DesignMatrix, weights: ArrayLike<number>, response: ArrayLike<number>, relativeTolerance: number, centring: ColumnCentring | null): NormalEquationsOutcome {
  const { xtwx, xtwy } = weightedCrossProducts(design, weights, response, centring?.shift);
  const factored = choleskyFactor(xtwx, design.columns, relativeTolerance);
  if (!factored.ok) return { ok: false, column: factored.column };
  const factor = factored.factor;
  return { ok: true, solution: { coefficients: choleskySolve(factor, xtwy), inverse: () => choleskyInverse(factor) } };
}
