import type { DesignMatrix } from "./design-matrix";
import { rowSparsity } from "./row-sparsity";

export interface CrossProducts {
  /** X'WX, p x p row-major. */
  readonly xtwx: Float64Array;
  /** X'Wy, length p. */
  readonly xtwy: Float64Array;
}

/**
 * Forms X'WX and X'Wy in one pass over the rows, with no per-row allocation.
 * `weights` and `response` have one entry per row of `design`. `shift` (one entry per column,
 * see column-centring.ts) is subtracted from every value of its column first, so the products
 * are those of X - 1 shift'; a column with a non-zero shift must have no zero entry.
 * Sparse designs (factor dummies) are walked by their non-zero entries only (see row-sparsity.ts),
 * which costs O(n q^2) for q non-zeros per row instead of O(n p^2).
 */
export function weightedCrossProducts(design: DesignMatrix, weights: ArrayLike<number>, response: ArrayLike<number>, shift?: ArrayLike<number>): CrossProducts {
  const { rows, columns, data } = design;
  const xtwx = new Float64Array(columns * columns);
  const xtwy = new Float64Array(columns);
  // One row's (shifted) values: the inner loops read them from here.
  const row = new Float64Array(columns);
  const sparse = rowSparsity(design);
  if (sparse) {
    const { rowStart, column, value } = sparse;
    for (let i = 0; i < rows; i += 1) {
      const w = weights[i]!;
      const wy = w * response[i]!;
      const start = rowStart[i]!;
      const end = rowStart[i + 1]!;
      for (let k = start; k < end; k += 1) row[k - start] = shift ? value[k]! - shift[column[k]!]! : value[k]!;
      for (let ka = start; ka < end; ka += 1) {
        const a = column[ka]!;
        const xa = row[ka - start]!;
        xtwy[a] += xa * wy;
        const wxa = w * xa;
        for (let kb = start; kb <= ka; kb += 1) xtwx[a * columns + column[kb]!] += wxa * row[kb - start]!;
      }
    }
  } else {
    for (let i = 0; i < rows; i += 1) {
      const w = weights[i]!;
      const wy = w * response[i]!;
      const offset = i * columns;
      for (let a = 0; a < columns; a += 1) row[a] = shift ? data[offset + a]! - shift[a]! : data[offset + a]!;
      for (let a = 0; a < columns; a += 1) {
        const xa = row[a]!;
        xtwy[a] += xa * wy;
        const wxa = w * xa;
        for (let b = 0; b <= a; b += 1) xtwx[a * columns + b] += wxa * row[b]!;
      }
    }
  }
  for (let a = 0; a < columns; a += 1) {
    for (let b = 0; b < a; b += 1) xtwx[b * columns + a] = xtwx[a * columns + b]!;
  }
  return { xtwx, xtwy };
}
