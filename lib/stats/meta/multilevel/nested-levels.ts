/**
 * The grouping of estimates into nested levels (e.g. species / site / site-year), outermost
 * first, as the tree the multilevel likelihood walks: every group at level l lies in exactly one
 * group at level l - 1, and every estimate in exactly one group at the innermost level.
 *
 * References:
 * - Konstantopoulos, S. (2011). Fixed effects and variance components estimation in three-level
 *   meta-analysis. Research Synthesis Methods 2: 61-76 (nested random intercepts for estimates
 *   within studies within clusters).
 * - Searle, S. R., Casella, G. & McCulloch, C. E. (1992). Variance Components. Wiley, ch. 5
 *   (nested classifications).
 *
 * Groups are identified by their whole path: the group of a row at level l is the combination of
 * its values in the level columns 1..l, so site codes need only be unique within a species (a site
 * "S1" of two species is two groups). Rows keep their order; the tree only indexes them.
 */
import { StudyInputError } from "../meta-data";

export interface LevelSpec {
  /** Name of the level (the column it comes from), e.g. "site". */
  readonly name: string;
  /** One label per estimate. */
  readonly values: readonly string[];
}

export interface NestedLevels {
  readonly k: number;
  /** Level names, outermost first. */
  readonly names: readonly string[];
  /** Number of groups at each level. */
  readonly groupCounts: readonly number[];
  /** parents[l][g]: the group at level l - 1 that group g of level l lies in (-1 at level 0). */
  readonly parents: readonly Int32Array[];
  /** rowGroups[l][i]: the group at level l of estimate i. */
  readonly rowGroups: readonly Int32Array[];
  /** labels[l][g]: the path of group g of level l, e.g. "species A / site S1". */
  readonly labels: readonly (readonly string[])[];
}

/**
 * Builds the nesting tree for `k` estimates from `levels` (outermost first).
 * Constraints: at least one level; distinct non-empty names; k labels per level, none empty; at
 * least two groups at every level (one group cannot be told apart from the mean); no level that
 * splits nothing (every group of it the only one in its parent group: the two levels would
 * describe the same variance twice).
 * Returns the tree. Throws StudyInputError naming the level (and estimate) for each violation.
 * Example: nestedLevels(4, [{ name: "site", values: ["a", "a", "b", "b"] }]).groupCounts -> [2].
 */
export function nestedLevels(k: number, levels: readonly LevelSpec[]): NestedLevels {
  if (levels.length === 0) throw new StudyInputError("a multilevel model needs at least one level (a grouping column)", "level");
  const names: string[] = [];
  for (const level of levels) {
    if (level.name.trim() === "") throw new StudyInputError("a level needs a name", "level");
    if (names.includes(level.name)) throw new StudyInputError(`level '${level.name}' is given twice`, level.name);
    if (level.values.length !== k) throw new StudyInputError(`level '${level.name}' has ${level.values.length} labels for ${k} estimates`, level.name);
    names.push(level.name);
  }
  const parents: Int32Array[] = [];
  const rowGroups: Int32Array[] = [];
  const labels: string[][] = [];
  const groupCounts: number[] = [];
  let previous: Int32Array | null = null;
  let previousLabels: string[] = [];
  levels.forEach((level, l) => {
    const index = new Map<string, number>();
    const groupOfRow = new Int32Array(k);
    const parentOf: number[] = [];
    const pathOf: string[] = [];
    for (let i = 0; i < k; i += 1) {
      const label = level.values[i]!;
      if (label.trim() === "") throw new StudyInputError(`estimate ${i + 1}: level '${level.name}' is empty; every estimate needs a group at every level`, level.name, i);
      const parent = previous === null ? -1 : previous[i]!;
      // The parent index makes the key a path: the same label under two parents is two groups.
      const key = `${parent}\u0000${label}`;
      let group = index.get(key);
      if (group === undefined) {
        group = parentOf.length;
        index.set(key, group);
        parentOf.push(parent);
        pathOf.push(parent < 0 ? `${level.name} ${label}` : `${previousLabels[parent]} / ${level.name} ${label}`);
      }
      groupOfRow[i] = group;
    }
    const count = parentOf.length;
    if (count < 2) {
      throw new StudyInputError(
        `level '${level.name}' has a single group ('${level.values[0]}'), so its variance cannot be told apart from the mean; drop the level`,
        level.name,
      );
    }
    if (l > 0 && count === groupCounts[l - 1]) {
      throw new StudyInputError(
        `levels '${names[l - 1]}' and '${level.name}' group the estimates identically (every '${names[l - 1]}' group holds exactly one '${level.name}' group), so their variances cannot be separated; drop one of them`,
        level.name,
      );
    }
    groupCounts.push(count);
    parents.push(Int32Array.from(parentOf));
    rowGroups.push(groupOfRow);
    labels.push(pathOf);
    previous = groupOfRow;
    previousLabels = pathOf;
  });
  return { k, names, groupCounts, parents, rowGroups, labels };
}
