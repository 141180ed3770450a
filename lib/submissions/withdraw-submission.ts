import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import type { Db, DbTransaction } from "../db/client";
import { AppError } from "../errors/app-error";
import type { JobView } from "../jobs/job-queue";
import { enqueueSiteRecompute } from "../jobs/recompute-site-estimates-job";
import { wakeServerJobRunner } from "../jobs/server-job-runner";
import { TRANSACTION_MAX_WAIT_MS, TRANSACTION_TIMEOUT_MS } from "./write-submission";

export interface WithdrawResult {
  /** The withdrawn submission. */
  submissionId: number;
  /** The earlier submission made the site's current one of its kind again, if the withdrawn one was current. */
  reinstatedId: number | null;
  /** The queued recomputation of the site's estimates, when the site's current data changed and call for one. */
  job: JobView | null;
}

type SubmissionLink = { id: number; status: "accepted" | "superseded" | "withdrawn"; supersedesId: number | null };

/** The nearest earlier submission in `from`'s chain that is not withdrawn, and the one that supersedes it. */
async function previousVersion(tx: DbTransaction, from: SubmissionLink): Promise<{ previous: SubmissionLink; child: SubmissionLink } | null> {
  let child = from;
  const seen = new Set<number>([from.id]);
  while (child.supersedesId !== null) {
    const previous = await tx.submission.findUnique({ where: { id: child.supersedesId }, select: { id: true, status: true, supersedesId: true } });
    if (!previous || seen.has(previous.id)) return null;
    if (previous.status !== "withdrawn") return { previous, child };
    seen.add(previous.id);
    child = previous;
  }
  return null;
}

/**
 * Withdraws a submission (the site lead's "delete"): its status becomes `withdrawn`, so its rows
 * are never read as data again (lists, analyses and exports read accepted submissions only), yet
 * they stay stored and the audit trail names what was withdrawn, by whom, with its SHA-256.
 *
 * When the withdrawn submission was the site's current one of its kind, the previous version (the
 * nearest earlier submission in its chain not itself withdrawn) becomes current again. The
 * withdrawn part of the chain is then cut loose from it (its link to what it superseded is cleared,
 * and kept in the audit entry), so the next upload can supersede the reinstated version. Brood
 * records, or covariates of a site with brood records, queue a recomputation of the site's
 * estimates, as an upload does.
 *
 * Throws AppError not_found for an unknown submission, conflict when it is withdrawn already.
 * Whether `actor` may (the coordinator, or the site's lead) is checked by the caller's policy gate
 * (submission.delete). Example: withdrawSubmission(db, 42, actor) -> { submissionId: 42, reinstatedId: 37, job }.
 */
export async function withdrawSubmission(db: Db, submissionId: number, actor: Actor): Promise<WithdrawResult> {
  let job: JobView | null = null;
  const reinstatedId = await db.$transaction(
    async (tx) => {
      const target = await tx.submission.findUnique({
        where: { id: submissionId },
        select: { id: true, siteId: true, kind: true, fileName: true, sha256: true, rowCount: true, status: true, supersedesId: true, site: { select: { code: true } } },
      });
      if (!target) throw new AppError("not_found", `submission ${submissionId} does not exist`, [{ field: "id", message: "unknown submission", value: String(submissionId) }]);
      if (target.status === "withdrawn") throw new AppError("conflict", `submission ${submissionId} is withdrawn already`);
      const wasCurrent = target.status === "accepted";
      const found = wasCurrent ? await previousVersion(tx, target) : null;
      await tx.submission.update({ where: { id: target.id }, data: { status: "withdrawn" } });
      if (found) {
        await tx.submission.update({ where: { id: found.child.id }, data: { supersedesId: null } });
        await tx.submission.update({ where: { id: found.previous.id }, data: { status: "accepted" } });
      }
      await recordAudit(tx, actor, {
        action: "submission.withdraw",
        entityType: "submission",
        entityId: target.id,
        before: { status: target.status, supersedesId: target.supersedesId, currentSubmissionId: wasCurrent ? target.id : null },
        after: {
          status: "withdrawn",
          siteCode: target.site.code,
          kind: target.kind,
          fileName: target.fileName,
          rowCount: target.rowCount,
          reinstatedId: found?.previous.id ?? null,
          ...(found && found.child.id !== target.id ? { detachedId: found.child.id } : {}),
        },
        sha256: target.sha256,
      });
      if (wasCurrent) {
        const hasBroods =
          (target.kind === "brood_records" && found !== null) ||
          (target.kind === "site_year_covariates" && (await tx.submission.count({ where: { siteId: target.siteId, kind: "brood_records", status: "accepted" } })) > 0);
        if (hasBroods) job = await enqueueSiteRecompute(tx, { siteId: target.siteId, submissionId: found?.previous.id ?? null });
      }
      return found?.previous.id ?? null;
    },
    { timeout: TRANSACTION_TIMEOUT_MS, maxWait: TRANSACTION_MAX_WAIT_MS },
  );
  if (job) wakeServerJobRunner();
  return { submissionId, reinstatedId, job };
}
