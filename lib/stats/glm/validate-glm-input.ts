import type { DesignMatrix } from "../linear/design-matrix";
import { solveWeightedNormalEquations } from "../linear/weighted-normal-equations";
import { ModelInputError } from "../model-error";
import type { GlmFamily } from "./glm-family";

/**
 * Checks a GLM's input before fitting: rows match, more observations than coefficients, finite
 * design, a response the family accepts, and a design of full column rank (a dependent column is
 * named; judged as the scoring steps judge it, on unit weights). Throws ModelInputError saying what is wrong; returns nothing when the input can be fitted.
 */
export function validateGlmInput(design: DesignMatrix, response: ArrayLike<number>, family: GlmFamily, options: { checkRank?: boolean } = {}): void {
  const { rows, columns, columnNames } = design;
  if (rows === 0) throw new ModelInputError("no observations to fit");
  if (response.length !== rows) throw new ModelInputError(`response has ${response.length} values, design has ${rows} rows`);
  if (columns === 0) throw new ModelInputError("the design has no columns");
  if (rows <= columns) throw new ModelInputError(`${rows} observations cannot identify ${columns} coefficients (need more observations than coefficients)`);
  // A factor-plus-covariates design holds 0/1 factor columns by construction: check its covariates.
  const structure = design.factorStructure;
  const values = structure ? structure.covariateValues : design.data;
  const width = structure ? structure.covariateCount : columns;
  const firstColumn = structure ? structure.levels : 0;
  for (let k = 0; k < values.length; k += 1) {
    if (!Number.isFinite(values[k]!)) {
      throw new ModelInputError(`design value in row ${Math.floor(k / width) + 1}, column ${columnNames[firstColumn + (k % width)]} is ${values[k]}`);
    }
  }
  const invalid = family.invalidResponse(response);
  if (invalid) throw new ModelInputError(invalid);
  if (options.checkRank === false) return;
  const unit = new Float64Array(rows).fill(1);
  const solved = solveWeightedNormalEquations(design, unit, unit);
  if (!solved.ok) throw new ModelInputError(singularDesignMessage(design, solved.column));
}

/** The error text for a design whose column `column` depends on the columns before it. */
export function singularDesignMessage(design: DesignMatrix, column: number): string {
  return `design column ${design.columnNames[column]} is a linear combination of the columns before it (singular design)`;
}
