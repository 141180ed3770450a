import type { DesignMatrix, FactorCovariateStructure } from "./design-matrix";

/**
 * A design with an intercept, a factor in treatment contrasts, and numeric covariates:
 * columns intercept, factor[level2], ..., factor[levelK], covariate1, covariate2, ...
 * The first level (in the order given, or sorted ascending when `levels` is omitted) is the
 * reference; each other level gets a 0/1 dummy column.
 *
 * The design declares its layout (`factorStructure`), so solvers can treat the factor block as
 * diagonal. Its dense `data` is built on first access only: structured fits never read it, and a
 * factor with tens of levels over a million rows would otherwise cost tens of megabytes per design.
 *
 * Constraints: `factor` and every covariate have the same length n >= 1; every factor value is
 * among `levels`. Throws Error on a length mismatch or an unknown level.
 * Example: factorDesign("year", [2001, 2002, 2001], { c: [0.5, -1, -0.5] }) gives columns
 * intercept, year[2002], c with rows [1,0,0.5], [1,1,-1], [1,0,-0.5].
 */
export function factorDesign<Level extends string | number>(
  factorName: string,
  factor: ArrayLike<Level>,
  covariates: Readonly<Record<string, ArrayLike<number>>>,
  levels?: readonly Level[],
): { design: DesignMatrix; levels: readonly Level[] } {
  const rows = factor.length;
  const orderedLevels = levels ?? [...new Set(Array.prototype.slice.call(factor) as Level[])].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  const levelIndex = new Map<Level, number>();
  orderedLevels.forEach((level, index) => levelIndex.set(level, index));
  const covariateNames = Object.keys(covariates);
  const names = ["intercept", ...orderedLevels.slice(1).map((level) => `${factorName}[${level}]`), ...covariateNames];
  const covariateCount = covariateNames.length;
  const covariateValues = new Float64Array(rows * covariateCount);
  covariateNames.forEach((name, k) => {
    const values = covariates[name]!;
    if (values.length !== rows) throw new Error(`covariate ${name} has ${values.length} values, factor has ${rows}`);
    for (let i = 0; i < rows; i += 1) covariateValues[i * covariateCount + k] = values[i]!;
  });
  const levelOfRow = new Int32Array(rows);
  let previousLevel: Level | undefined;
  let previousIndex = -1;
  for (let i = 0; i < rows; i += 1) {
    // Rows usually come grouped by level: reuse the last lookup.
    const level = factor[i]!;
    const index = level === previousLevel ? previousIndex : levelIndex.get(level);
    if (index === undefined) throw new Error(`${factorName} value ${String(level)} is not among the levels`);
    previousLevel = level;
    previousIndex = index;
    levelOfRow[i] = index;
  }
  const factorStructure: FactorCovariateStructure = { levels: orderedLevels.length, levelOfRow, covariateCount, covariateValues };
  let dense: Float64Array | null = null;
  const design: DesignMatrix = {
    rows,
    columns: names.length,
    columnNames: names,
    factorStructure,
    get data() {
      dense ??= denseFactorData(rows, names.length, factorStructure);
      return dense;
    },
  };
  return { design, levels: orderedLevels };
}

/** The row-major dense form of a factor-plus-covariates design. */
function denseFactorData(rows: number, columns: number, structure: FactorCovariateStructure): Float64Array {
  const { levels, levelOfRow, covariateCount, covariateValues } = structure;
  const data = new Float64Array(rows * columns);
  for (let i = 0; i < rows; i += 1) {
    const offset = i * columns;
    data[offset] = 1;
    const level = levelOfRow[i]!;
    if (level > 0) data[offset + level] = 1;
    for (let k = 0; k < covariateCount; k += 1) data[offset + levels + k] = covariateValues[i * covariateCount + k]!;
  }
  return data;
}
