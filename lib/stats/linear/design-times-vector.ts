import type { DesignMatrix } from "./design-matrix";
import { rowSparsity } from "./row-sparsity";

/**
 * X b for a design X (n x p) and a coefficient vector b (length p): the linear predictor.
 * Writes into `out` (length n) when given, so iterative fits allocate once. Sparse designs are
 * walked by their non-zero entries only.
 * Example: designTimesVector(designMatrix(2, ["a", "b"], Float64Array.of(1, 2, 3, 4)), Float64Array.of(1, 1)) -> [3, 7].
 */
export function designTimesVector(design: DesignMatrix, vector: ArrayLike<number>, out?: Float64Array): Float64Array {
  const { rows, columns, data } = design;
  if (vector.length !== columns) throw new Error(`vector has ${vector.length} entries, design has ${columns} columns`);
  const result = out ?? new Float64Array(rows);
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
  for (let i = 0; i < rows; i += 1) {
    const offset = i * columns;
    let sum = 0;
    for (let j = 0; j < columns; j += 1) sum += data[offset + j]! * vector[j]!;
    result[i] = sum;
  }
  return result;
}
