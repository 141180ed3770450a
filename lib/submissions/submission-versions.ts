import type { SubmissionKindName } from "../ingest/schemas/vocabulary";
import type { SubmissionSummary } from "./list-submissions";

/**
 * A site's submission history as numbered versions per kind: version 1 is the first file of that
 * kind, each later one (a new upload or a restore) the next number; withdrawn versions keep
 * their number. `previousId` is the version before it, for "what this version changed".
 */
export interface SubmissionVersion extends SubmissionSummary {
  version: number;
  previousId: number | null;
  /** Whether this version is the kind's current one. */
  current: boolean;
}

export interface KindHistory {
  kind: SubmissionKindName;
  currentId: number | null;
  /** Newest first. */
  versions: SubmissionVersion[];
}

const KIND_ORDER: SubmissionKindName[] = ["brood_records", "site_year_covariates", "estimates"];

/** Groups one site's submissions (any order) into numbered versions per kind, kinds in a fixed order. */
export function submissionVersions(submissions: readonly SubmissionSummary[]): KindHistory[] {
  return KIND_ORDER.flatMap((kind) => {
    const oldestFirst = submissions.filter((s) => s.kind === kind).sort((a, b) => a.submittedAt.getTime() - b.submittedAt.getTime() || a.id - b.id);
    if (oldestFirst.length === 0) return [];
    const versions = oldestFirst.map((s, i): SubmissionVersion => ({ ...s, version: i + 1, previousId: i > 0 ? oldestFirst[i - 1]!.id : null, current: s.status === "accepted" }));
    return [{ kind, currentId: versions.find((v) => v.current)?.id ?? null, versions: versions.reverse() }];
  });
}
