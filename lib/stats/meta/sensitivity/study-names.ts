/**
 * Names attached to studies in the sensitivity analyses: a label per study for the output, and a
 * group per study (a site, a species) for leaving out or pooling groups of estimates.
 */
import { ModelInputError } from "../../model-error";

/** Checks per-study labels or groups: one non-empty name per study. */
export function checkStudyNames(k: number, names: readonly string[] | undefined, what: string): void {
  if (names === undefined) return;
  if (names.length !== k) throw new ModelInputError(`${k} studies but ${names.length} ${what}`);
  const blank = names.findIndex((name) => name.trim() === "");
  if (blank >= 0) throw new ModelInputError(`study ${blank + 1}: the ${what.replace(/s$/, "")} is empty; every study needs one`);
}

/** The label of study i (0-based). */
export function studyLabel(labels: readonly string[] | undefined, i: number): string {
  return labels?.[i] ?? `study ${i + 1}`;
}

/** The groups sorted by name (code unit order), each with its 0-based rows in file order. */
export function groupRows(groups: readonly string[]): [string, number[]][] {
  const byGroup = new Map<string, number[]>();
  groups.forEach((group, i) => {
    const rows = byGroup.get(group);
    if (rows) rows.push(i);
    else byGroup.set(group, [i]);
  });
  return [...byGroup].sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
}
