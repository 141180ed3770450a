/**
 * A dense design matrix in row-major order: element (i, j) is data[i * columns + j].
 * Typed arrays keep large fits (k up to 1e6 rows) free of per-row objects.
 */
export interface DesignMatrix {
  readonly rows: number;
  readonly columns: number;
  readonly data: Float64Array;
  /** One name per column, e.g. "intercept", "latitude", "species[Parus major]". */
  readonly columnNames: readonly string[];
}

export function designMatrix(rows: number, columnNames: readonly string[], data?: Float64Array): DesignMatrix {
  const columns = columnNames.length;
  const values = data ?? new Float64Array(rows * columns);
  if (values.length !== rows * columns) {
    throw new Error(`design matrix data has ${values.length} values, expected ${rows} x ${columns}`);
  }
  return { rows, columns, data: values, columnNames };
}

/** The intercept-only design: one column of ones. */
export function interceptOnly(rows: number): DesignMatrix {
  return designMatrix(rows, ["intercept"], new Float64Array(rows).fill(1));
}
