import type { Db } from "../../lib/db/client";

/**
 * Deletes every row of every table, children before parents, in one transaction: either the
 * database is empty afterwards or it is as it was.
 */
export async function clearDatabase(db: Db): Promise<void> {
  await db.$transaction(
    async (tx) => {
      await tx.analysisRun.deleteMany();
      await tx.analysis.deleteMany();
      await tx.job.deleteMany();
      await tx.columnMapping.deleteMany();
      await tx.estimate.deleteMany();
      await tx.broodRecord.deleteMany();
      await tx.siteYear.deleteMany();
      await tx.moderatorValue.deleteMany();
      // Submissions point at the ones they superseded: unlink before deleting.
      await tx.submission.updateMany({ data: { supersedesId: null } });
      await tx.submission.deleteMany();
      await tx.site.deleteMany();
      await tx.moderator.deleteMany();
      await tx.species.deleteMany();
      await tx.auditEntry.deleteMany();
      await tx.apiToken.deleteMany();
      await tx.session.deleteMany();
      await tx.signInAttempt.deleteMany();
      await tx.user.deleteMany();
      await tx.networkSetting.deleteMany();
    },
    { timeout: 10 * 60_000, maxWait: 60_000 },
  );
}
