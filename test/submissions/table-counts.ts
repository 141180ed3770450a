import type { Db } from "@/lib/db/client";

/** Row counts of every table an upload writes to, and the accepted submissions: equal before and after means nothing was written. */
export async function tableCounts(db: Db) {
  const [submissions, broods, siteYears, estimates, jobs, audit, mappings, accepted] = await Promise.all([
    db.submission.count(),
    db.broodRecord.count(),
    db.siteYear.count(),
    db.estimate.count(),
    db.job.count(),
    db.auditEntry.count(),
    db.columnMapping.count(),
    db.submission.findMany({ where: { status: "accepted" }, select: { id: true, kind: true }, orderBy: { id: "asc" } }),
  ]);
  return { submissions, broods, siteYears, estimates, jobs, audit, mappings, accepted };
}
