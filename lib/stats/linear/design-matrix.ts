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
  /**
   * Declared by the builder when the design is one factor in treatment contrasts plus dense
   * covariates (see factorDesign); solvers may then treat the factor block as diagonal. Absent for
   * a general design. It describes the same matrix as `data`, never a different one.
   */
  readonly factorStructure?: FactorCovariateStructure;
}

/**
 * The layout of a design made of an intercept, one factor in treatment contrasts and dense
 * covariates: column 0 is the intercept, columns 1 .. levels - 1 the 0/1 dummies of levels
 * 1 .. levels - 1 (level 0 is the reference), and column levels + j is covariate j.
 */
export interface FactorCovariateStructure {
  /** Number of factor levels (>= 1; with 1 level the design is intercept + covariates). */
  readonly levels: number;
  /** Level of each row, 0-based (0 = the reference level). */
  readonly levelOfRow: Int32Array;
  /** Number of covariate columns. */
  readonly covariateCount: number;
  /** Covariate values, row-major: row i, covariate j at i * covariateCount + j. */
  readonly covariateValues: Float64Array;
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
