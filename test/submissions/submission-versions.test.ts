import { describe, expect, it } from "vitest";
import { submissionVersions } from "@/lib/submissions/submission-versions";
import type { SubmissionSummary } from "@/lib/submissions/list-submissions";

const submission = (id: number, kind: SubmissionSummary["kind"], minute: number, status: SubmissionSummary["status"]): SubmissionSummary => ({
  id, siteCode: "AAA", kind, fileName: `${kind}-${id}.csv`, sha256: "0".repeat(64), rowCount: 10, submittedBy: null,
  submittedAt: new Date(Date.UTC(2024, 0, 1, 0, minute)), status, supersedesId: null, supersededById: null,
});

describe("submission versions", () => {
  it("numbers each kind's files from the oldest, newest first, with the previous version and the current one", () => {
    const history = submissionVersions([
      submission(7, "estimates", 5, "accepted"),
      submission(3, "brood_records", 2, "superseded"),
      submission(1, "brood_records", 1, "superseded"),
      submission(9, "brood_records", 9, "accepted"),
      submission(4, "brood_records", 2, "withdrawn"),
    ]);
    expect(history.map((h) => h.kind)).toEqual(["brood_records", "estimates"]);
    const broods = history[0]!;
    expect(broods.versions.map((v) => [v.id, v.version, v.previousId])).toEqual([[9, 4, 4], [4, 3, 3], [3, 2, 1], [1, 1, null]]);
    expect(broods.currentId).toBe(9);
    expect(history[1]!.versions[0]!.current).toBe(true);
  });

  it("has no current version when every version was withdrawn, and nothing for no submissions", () => {
    expect(submissionVersions([submission(2, "estimates", 1, "withdrawn")])[0]!.currentId).toBeNull();
    expect(submissionVersions([])).toEqual([]);
  });
});
