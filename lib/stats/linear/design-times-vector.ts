import type { DesignMatrix } from "./design-matrix";
import { rowSparsity } from "./row-sparsity";

/**
 * X b for a design X (n x p) and a coefficient vector b (length p): the linear predictor.
 * Writes into `out` (length n) when given, so iterative fits allocate once. Designs that declare
 * a factor-plus-covariates structure are read from it; other sparse designs are walked by their
 * non-zero entries only.
 * Example: designTimesVector(designMatrix(2, ["a", "b"], Float64Array.of(1, 2, 3, 4)), Float64Array.of(1, 1)) -> [3, 7].
 */
export function designTimesVector(design: DesignMatrix, vector: ArrayLike<number>, out?: Float64Array): Float64Array {
  const { rows, columns } = design;
  if (vector.length !== columns) throw new Error(`vector has ${vector.length} entries, design has ${columns} columns`);
  const result = out ?? new Float64Array(rows);
  const structure = design.factorStructure;
  if (structure) {
    // Intercept plus the row's level dummy, then the covariates: the sparse path's order of sums.
    const { levels, levelOfRow, covariateCount, covariateValues } = structure;
    const levelSum = new Float64Array(levels);
    for (let k = 0; k < levels; k += 1) levelSum[k] = k === 0 ? vector[0]! : vector[0]! + vector[k]!;
    for (let i = 0; i < rows; i += 1) {
      let sum = levelSum[levelOfRow[i]!]!;
      const offset = i * covariateCount;
      for (let j = 0; j < covariateCount; j += 1) sum += covariateValues[offset + j]! * vector[levels + j]!;
      result[i] = sum;
    }
    return result;
  }
  const sparse = rowSparsity(design);
  if (sparse) {
    const { rowStart, column, value } = sparse;
    for (let i = 0; i < rows; i += 1) {
      let sum = 0;
      const end = rowStart[i + 1]!;
      for (let k = rowStart[i]!; k < end; k += 1) sum += value[k]! * vector[column[k]!]!;
      result[i] = sum;
    }
    return result;
  }
  const data = design.data;
  for (let i = 0; i < rows; i += 1) {
    const offset = i * columns;
    let sum = 0;
    for (let j = 0; j < columns; j += 1) sum += data[offset + j]! * vector[j]!;
    result[i] = sum;
  }
  return result;
}
