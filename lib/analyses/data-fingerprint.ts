import { createHash } from "node:crypto";
import type { AnalysisDataset } from "./analysis-dataset";

/**
 * SHA-256 (lower-case hex) of what a run read, so a later look can tell that the data changed:
 * the accepted submissions used (id and SHA-256 of their bytes), each pooled estimate (id, value,
 * standard error: a recomputation from the same submission changes these), and the moderator
 * values read. One line per item, in a fixed order; numbers in shortest round-trip form.
 */
export function dataFingerprint(dataset: Pick<AnalysisDataset, "submissions" | "studies" | "moderatorValues">): string {
  const lines = [
    ...dataset.submissions.map((s) => `submission ${s.id} ${s.sha256}`),
    ...[...dataset.studies].sort((a, b) => a.estimateId - b.estimateId).map((s) => `estimate ${s.estimateId} ${s.value} ${s.standardError}`),
    ...dataset.moderatorValues.map((m) => `moderator ${JSON.stringify(m.siteCode)} ${JSON.stringify(m.key)} ${JSON.stringify(m.value)} ${m.standardError ?? ""}`),
  ];
  return createHash("sha256").update(`${lines.join("\n")}\n`).digest("hex");
}
