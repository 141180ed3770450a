/**
 * The design matrix of a meta-regression from named study-level moderators: an intercept, each
 * numeric moderator as given or centred at its mean, each categorical moderator as treatment
 * contrasts (one 0/1 column per level other than the reference level).
 *
 * References:
 * - Chambers, J. M. & Hastie, T. J. (1992). Statistical Models in S, section 2.3.2 (treatment
 *   contrasts).
 * - Thompson, S. G. & Higgins, J. P. T. (2002). How should meta-regression analyses be undertaken
 *   and interpreted? Statistics in Medicine 21: 1559-1573 (study-level covariates).
 *
 * Column names: "intercept"; a numeric moderator's own name; a categorical moderator's level
 * columns "name[level]". Levels are sorted by code unit; the reference defaults to the first.
 */
import { designMatrix, type DesignMatrix } from "../linear/design-matrix";
import { conditionDesign, ILL_CONDITIONED_PIVOT } from "./design-conditioning";
import { StudyInputError } from "./meta-data";

export type ModeratorSpec =
  | {
      kind: "numeric";
      name: string;
      values: ArrayLike<number>;
      /** Subtract the moderator's mean, so the intercept is the effect at the mean. Default false. */
      centre?: boolean;
    }
  | {
      kind: "categorical";
      name: string;
      values: readonly string[];
      /** The level absorbed into the intercept. Default: the first level in sorted order. */
      reference?: string;
    };

export type DesignTerm =
  | { readonly column: string; readonly kind: "intercept" }
  | { readonly column: string; readonly kind: "numeric"; readonly moderator: string; readonly centredAt: number | null }
  | { readonly column: string; readonly kind: "level"; readonly moderator: string; readonly level: string; readonly reference: string };

export interface ModeratorDesign {
  readonly design: DesignMatrix;
  readonly terms: readonly DesignTerm[];
  /** Level lists of the categorical moderators, reference first. */
  readonly levels: Readonly<Record<string, readonly string[]>>;
  /** True when the columns are nearly collinear (fitted, but the fit carries a warning). */
  readonly illConditioned: boolean;
}

function byCodeUnit(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * Builds the design for `k` studies from `moderators` (in the order given).
 * Constraints: unique moderator names other than "intercept"; k values per moderator; numeric
 * values finite with |x| <= 1e100; categorical values non-empty with at least two levels; a given
 * reference must be one of the levels.
 * Returns the design with an intercept first, its terms, and the level lists.
 * Throws StudyInputError (a ModelInputError) naming the moderator (and study) for each violation,
 * and ModelInputError naming the collinear terms when the design is rank-deficient.
 * Example: moderatorDesign(3, [{ kind: "categorical", name: "habitat", values: ["oak", "pine", "oak"] }])
 * has columns intercept, habitat[pine] and rows [1,0], [1,1], [1,0].
 */
export function moderatorDesign(k: number, moderators: readonly ModeratorSpec[]): ModeratorDesign {
  const seen = new Set<string>();
  const columns: { name: string; values: Float64Array }[] = [];
  const terms: DesignTerm[] = [{ column: "intercept", kind: "intercept" }];
  const levels: Record<string, readonly string[]> = {};
  for (const moderator of moderators) {
    const { name } = moderator;
    if (name.trim() === "") throw new StudyInputError("a moderator needs a name", name);
    if (name === "intercept") throw new StudyInputError("'intercept' is the name of the intercept term; rename the moderator", name);
    if (seen.has(name)) throw new StudyInputError(`moderator '${name}' is given twice`, name);
    seen.add(name);
    if (moderator.values.length !== k) throw new StudyInputError(`moderator '${name}' has ${moderator.values.length} values for ${k} studies`, name);
    if (moderator.kind === "numeric") {
      const values = new Float64Array(k);
      let sum = 0;
      for (let i = 0; i < k; i += 1) {
        const x = moderator.values[i]!;
        if (!Number.isFinite(x) || Math.abs(x) > 1e100) {
          throw new StudyInputError(`study ${i + 1}: moderator '${name}' is ${Number.isNaN(x) ? "NaN" : x}; numeric moderators must be finite (|x| <= 1e100)`, name, i);
        }
        values[i] = x;
        sum += x;
      }
      let centredAt: number | null = null;
      if (moderator.centre) {
        centredAt = sum / k;
        for (let i = 0; i < k; i += 1) values[i] = values[i]! - centredAt;
      }
      columns.push({ name, values });
      terms.push({ column: name, kind: "numeric", moderator: name, centredAt });
    } else {
      for (let i = 0; i < k; i += 1) {
        if (moderator.values[i]!.trim() === "") throw new StudyInputError(`study ${i + 1}: moderator '${name}' is empty; every study needs a level`, name, i);
      }
      const sorted = [...new Set(moderator.values)].sort(byCodeUnit);
      if (sorted.length < 2) {
        throw new StudyInputError(`moderator '${name}' has a single level ('${sorted[0]}') in every study, so it cannot explain anything; remove it`, name);
      }
      const reference = moderator.reference ?? sorted[0]!;
      if (!sorted.includes(reference)) {
        throw new StudyInputError(`reference level '${reference}' of moderator '${name}' does not occur; its levels are ${sorted.map((l) => `'${l}'`).join(", ")}`, name);
      }
      const ordered = [reference, ...sorted.filter((level) => level !== reference)];
      levels[name] = ordered;
      for (const level of ordered.slice(1)) {
        const values = new Float64Array(k);
        for (let i = 0; i < k; i += 1) values[i] = moderator.values[i] === level ? 1 : 0;
        const column = `${name}[${level}]`;
        columns.push({ name: column, values });
        terms.push({ column, kind: "level", moderator: name, level, reference });
      }
    }
  }
  const columnNames = terms.map((term) => term.column);
  if (new Set(columnNames).size !== columnNames.length) {
    const clash = columnNames.find((column, index) => columnNames.indexOf(column) !== index)!;
    throw new StudyInputError(`two design columns would both be called '${clash}'; rename a moderator`, clash);
  }
  const p = columnNames.length;
  const data = new Float64Array(k * p);
  for (let i = 0; i < k; i += 1) {
    data[i * p] = 1;
    for (let j = 1; j < p; j += 1) data[i * p + j] = columns[j - 1]!.values[i]!;
  }
  const design = designMatrix(k, columnNames, data);
  // Rank check now, so the error names the moderators before any fitting starts.
  const { smallestPivotRatio } = conditionDesign(design);
  return { design, terms, levels, illConditioned: smallestPivotRatio < ILL_CONDITIONED_PIVOT };
}

/**
 * One design row (for a prediction) from moderator values, coded like the fitted design: numeric
 * moderators as numbers (centred with the fitted mean when the design centred them), categorical
 * ones as level names. Every moderator must be given.
 * Throws StudyInputError naming the moderator for a missing, non-finite or unknown value.
 * Example: encodeModeratorRow(design, { habitat: "pine" }) -> [1, 1].
 */
export function encodeModeratorRow(moderators: ModeratorDesign, values: Readonly<Record<string, number | string>>): Float64Array {
  const row = new Float64Array(moderators.terms.length);
  const known = new Set(moderators.terms.flatMap((term) => (term.kind === "intercept" ? [] : [term.moderator])));
  for (const name of Object.keys(values)) {
    if (!known.has(name)) throw new StudyInputError(`'${name}' is not a moderator of this model (its moderators: ${[...known].join(", ") || "none"})`, name);
  }
  moderators.terms.forEach((term, j) => {
    if (term.kind === "intercept") {
      row[j] = 1;
      return;
    }
    const value = values[term.moderator];
    if (value === undefined) throw new StudyInputError(`a prediction needs a value for moderator '${term.moderator}'`, term.moderator);
    if (term.kind === "numeric") {
      const x = typeof value === "number" ? value : Number.NaN;
      if (!Number.isFinite(x)) throw new StudyInputError(`moderator '${term.moderator}' needs a finite number, got '${value}'`, term.moderator);
      row[j] = term.centredAt === null ? x : x - term.centredAt;
    } else {
      const levelsOf = moderators.levels[term.moderator]!;
      if (!levelsOf.includes(String(value))) {
        throw new StudyInputError(`'${value}' is not a level of moderator '${term.moderator}' (levels: ${levelsOf.join(", ")})`, term.moderator);
      }
      row[j] = String(value) === term.level ? 1 : 0;
    }
  });
  return row;
}
