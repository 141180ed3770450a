import type { DesignMatrix } from "./design-matrix";

/**
 * The non-zero entries of each row of a design, in compressed sparse row form, found once per
 * design and reused by every later pass (iterative fits make dozens). Factor designs, with one
 * dummy per row among many columns, then cost O(non-zeros) per pass instead of O(n p).
 *
 * The cache is keyed by the design's data array, so a design's values must not change after it
 * has been used in a fit (designs are built once and treated as immutable throughout lib/stats).
 */
export interface RowSparsity {
  /** Row i's entries are at positions rowStart[i] .. rowStart[i + 1] - 1. */
  readonly rowStart: Int32Array;
  readonly column: Int32Array;
  readonly value: Float64Array;
}

const cache = new WeakMap<Float64Array, RowSparsity | null>();

/** Below this share of non-zeros the sparse form pays for itself. */
const SPARSE_SHARE = 0.5;

/**
 * The design's rows in sparse form, or null when the design is dense enough that plain loops are
 * as fast. Computed on first use and cached.
 */
export function rowSparsity(design: DesignMatrix): RowSparsity | null {
  const cached = cache.get(design.data);
  if (cached !== undefined) return cached;
  const { rows, columns, data } = design;
  let nonZeros = 0;
  for (let k = 0; k < data.length; k += 1) if (data[k] !== 0) nonZeros += 1;
  if (columns < 4 || nonZeros > SPARSE_SHARE * data.length) {
    cache.set(data, null);
    return null;
  }
  const rowStart = new Int32Array(rows + 1);
  const column = new Int32Array(nonZeros);
  const value = new Float64Array(nonZeros);
  let position = 0;
  for (let i = 0; i < rows; i += 1) {
    rowStart[i] = position;
    const offset = i * columns;
    for (let j = 0; j < columns; j += 1) {
      const x = data[offset + j]!;
      if (x !== 0) {
        column[position] = j;
        value[position] = x;
        position += 1;
      }
    }
  }
  rowStart[rows] = position;
  const sparsity = { rowStart, column, value };
  cache.set(data, sparsity);
  return sparsity;
}
