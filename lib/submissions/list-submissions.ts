import { z } from "zod";
import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { submissionKindSchema } from "../ingest/schemas/vocabulary";
import { siteCodeSchema } from "../network/site-input";

/** accepted: a site's current submission of its kind; superseded: an earlier one, kept; withdrawn: deleted, kept for the record. */
export const submissionStatusSchema = z.enum(["accepted", "superseded", "withdrawn"]);

export const submissionFilterSchema = z.object({
  site: z.array(siteCodeSchema).optional().describe("Site codes (repeat the parameter for several)."),
  kind: z.array(submissionKindSchema).optional(),
  status: z.array(submissionStatusSchema).optional(),
});
export type SubmissionFilter = z.output<typeof submissionFilterSchema>;

export interface SubmissionSummary {
  id: number;
  siteCode: string;
  kind: z.infer<typeof submissionKindSchema>;
  fileName: string;
  sha256: string;
  rowCount: number;
  submittedBy: string | null;
  submittedAt: Date;
  status: z.infer<typeof submissionStatusSchema>;
  supersedesId: number | null;
  supersededById: number | null;
}

const INCLUDE = {
  site: { select: { code: true } },
  submittedBy: { select: { displayName: true } },
  supersededBy: { select: { id: true } },
} as const;

type SubmissionRow = Awaited<ReturnType<typeof findOne>>;
function findOne(db: Db, id: number) {
  return db.submission.findUnique({ where: { id }, include: INCLUDE });
}

function summary(row: NonNullable<SubmissionRow>): SubmissionSummary {
  return {
    id: row.id,
    siteCode: row.site.code,
    kind: row.kind,
    fileName: row.fileName,
    sha256: row.sha256,
    rowCount: row.rowCount,
    submittedBy: row.submittedBy?.displayName ?? null,
    submittedAt: row.submittedAt,
    status: row.status,
    supersedesId: row.supersedesId,
    supersededById: row.supersededBy?.id ?? null,
  };
}

/** Submissions matching the filter, newest first: the provenance of every row in the network. */
export async function listSubmissions(db: Db, filter: SubmissionFilter): Promise<SubmissionSummary[]> {
  const rows = await db.submission.findMany({
    where: {
      ...(filter.site?.length ? { site: { code: { in: filter.site } } } : {}),
      ...(filter.kind?.length ? { kind: { in: filter.kind } } : {}),
      ...(filter.status?.length ? { status: { in: filter.status } } : {}),
    },
    include: INCLUDE,
    orderBy: [{ submittedAt: "desc" }, { id: "desc" }],
  });
  return rows.map(summary);
}

/** One submission. Throws AppError not_found for an unknown id. */
export async function getSubmission(db: Db, id: number): Promise<SubmissionSummary> {
  const row = await findOne(db, id);
  if (!row) throw new AppError("not_found", `submission ${id} does not exist`, [{ field: "id", message: "unknown submission", value: String(id) }]);
  return summary(row);
}
