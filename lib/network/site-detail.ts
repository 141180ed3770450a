import type { Db } from "../db/client";

/**
 * One site with what its page shows: metadata, moderator values, submission history,
 * current site-year covariates and current estimates. Null when the code is unknown.
 */
export async function getSiteDetail(db: Db, code: string) {
  const site = await db.site.findUnique({
    where: { code },
    include: {
      species: true,
      leadUser: { select: { displayName: true, email: true } },
      moderatorValues: { include: { moderator: true }, orderBy: { moderator: { key: "asc" } } },
      submissions: { orderBy: { submittedAt: "desc" }, select: { id: true, kind: true, fileName: true, sha256: true, rowCount: true, submittedAt: true, status: true } },
    },
  });
  if (!site) return null;
  const current = { siteId: site.id, submission: { status: "accepted" as const } };
  const [siteYears, estimates, broodsByYear] = await Promise.all([
    db.siteYear.findMany({ where: current, orderBy: { year: "asc" } }),
    db.estimate.findMany({ where: current, orderBy: [{ outcome: "asc" }, { level: "asc" }, { term: "asc" }, { year: "asc" }] }),
    db.broodRecord.groupBy({ by: ["year"], where: current, _count: { _all: true }, orderBy: { year: "asc" } }),
  ]);
  return {
    site,
    siteYears,
    estimates,
    broodsByYear: broodsByYear.map((b) => ({ year: b.year, broods: b._count._all })),
  };
}

export type SiteDetail = NonNullable<Awaited<ReturnType<typeof getSiteDetail>>>;
