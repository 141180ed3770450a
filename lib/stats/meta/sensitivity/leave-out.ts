/**
 * Leave-one-out analysis: the model refitted without each estimate in turn, or without each group
 * of estimates (all the estimates of one site), with tau^2 re-estimated every time.
 *
 * References:
 * - Viechtbauer, W. & Cheung, M. W.-L. (2010). Outlier and influence diagnostics for
 *   meta-analysis. Research Synthesis Methods 1: 112-125.
 *
 * Every refit is a full fitMetaModel result (pooled estimate with its interval, tau^2 with its
 * Q-profile interval, I^2, Q and warnings), so a leave-out row reads exactly like `pool` on the
 * remaining estimates.
 */
import type { StatWarning } from "../../warnings";
import { ModelInputError } from "../../model-error";
import { fitMetaModel } from "../fit-meta-model";
import type { MetaData } from "../meta-data";
import type { MetaModelResult } from "../meta-result";
import { fitSubset, refitWarnings, rowsWithout, type RefitOutcome, type SensitivityFitOptions } from "./subset-fit";
import { checkStudyNames, groupRows, studyLabel } from "./study-names";

export interface LeaveOutOptions extends SensitivityFitOptions {
  /**
   * One group name per study (e.g. the site code): leave out each group's estimates together.
   * Default: leave out one estimate at a time.
   */
  groups?: readonly string[];
  /** One label per study for the output (default "study 1", "study 2", ...). */
  labels?: readonly string[];
}

export interface LeaveOutOmission {
  /** The group left out, or the label of the estimate left out. */
  readonly label: string;
  /** 0-based rows left out. */
  readonly rows: readonly number[];
  readonly refit: RefitOutcome;
}

export interface LeaveOutResult {
  readonly by: "estimate" | "group";
  /** The fit to all studies. */
  readonly full: MetaModelResult;
  /** One per estimate (file order) or per group (sorted by name). */
  readonly omissions: readonly LeaveOutOmission[];
  /** Refits that could not be computed or did not converge (each omission also says so itself). */
  readonly warnings: readonly StatWarning[];
}

/**
 * Refits the model without each estimate (or each group) in turn.
 * Constraints: the full model must be fittable (k >= 2, k > p); `groups` and `labels`, if given,
 * have one non-empty name per study; leaving out by group needs at least two groups.
 * Returns the full fit and one refit per omission; an omission whose remaining studies cannot be
 * fitted (one study left, a moderator level with no studies left, ...) carries the reason.
 * Throws ModelInputError when the full model cannot be fitted or the groups are unusable.
 * Example: leaveOut(bcg, { method: "reml" }).omissions[0].refit.fit.coefficients[0].estimate is the
 * pooled log risk ratio without trial 1.
 */
export function leaveOut(data: MetaData, options: LeaveOutOptions = {}): LeaveOutResult {
  const { groups, labels, ...fitOptions } = options;
  checkStudyNames(data.k, labels, "labels");
  checkStudyNames(data.k, groups, "group names");
  const full = fitMetaModel(data, fitOptions);
  const omissions: LeaveOutOmission[] = [];
  if (groups === undefined) {
    for (let i = 0; i < data.k; i += 1) {
      omissions.push({ label: studyLabel(labels, i), rows: [i], refit: fitSubset(data, rowsWithout(data.k, new Set([i])), fitOptions) });
    }
  } else {
    const byGroup = groupRows(groups);
    if (byGroup.length < 2) throw new ModelInputError(`leaving out by group needs at least two groups; every study is in '${groups[0]}'`);
    for (const [group, rows] of byGroup) {
      omissions.push({ label: group, rows, refit: fitSubset(data, rowsWithout(data.k, new Set(rows)), fitOptions) });
    }
  }
  const by = groups === undefined ? "estimate" : "group";
  return Object.freeze({ by, full, omissions: Object.freeze(omissions), warnings: refitWarnings(omissions, by === "estimate" ? "without one estimate" : "without one group") });
}
