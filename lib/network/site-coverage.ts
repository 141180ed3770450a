import type { Db } from "../db/client";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";

/** What one site has contributed, year by year, from its current (accepted) submissions. */
export interface SiteCoverage {
  code: string;
  /** Kinds of the site's accepted submissions. */
  dataKinds: SubmissionKindName[];
  /** Broods per year, years in order. */
  broodsByYear: { year: number; count: number }[];
  /** Years the site covers with its own per-year estimates but no brood records, with the number of estimates. */
  estimateOnlyYears: { year: number; count: number }[];
}

export interface CoverageTotals {
  /** Site-years with brood records. */
  siteYearsWithRecords: number;
  /** Site-years covered by the sites' own estimates only. */
  siteYearsWithEstimatesOnly: number;
  /** First and last year with any data, or null without data. */
  years: { first: number; last: number } | null;
}

const CURRENT = { submission: { status: "accepted" as const } };

/** Every site's coverage, keyed by site code. */
export async function listSiteCoverage(db: Db): Promise<Map<string, SiteCoverage>> {
  const [sites, kinds, broods, estimates] = await Promise.all([
    db.site.findMany({ select: { id: true, code: true }, orderBy: { code: "asc" } }),
    db.submission.groupBy({ by: ["siteId", "kind"], where: { status: "accepted" } }),
    db.broodRecord.groupBy({ by: ["siteId", "year"], where: CURRENT, _count: { _all: true }, orderBy: [{ siteId: "asc" }, { year: "asc" }] }),
    db.estimate.groupBy({ by: ["siteId", "year"], where: { ...CURRENT, source: "uploaded", year: { not: null } }, _count: { _all: true }, orderBy: [{ siteId: "asc" }, { year: "asc" }] }),
  ]);
  const byId = new Map<number, SiteCoverage>(sites.map((s) => [s.id, { code: s.code, dataKinds: [], broodsByYear: [], estimateOnlyYears: [] }]));
  for (const k of kinds) byId.get(k.siteId)?.dataKinds.push(k.kind);
  for (const b of broods) byId.get(b.siteId)?.broodsByYear.push({ year: b.year, count: b._count._all });
  for (const e of estimates) {
    const site = byId.get(e.siteId);
    if (!site || e.year === null || site.broodsByYear.some((b) => b.year === e.year)) continue;
    site.estimateOnlyYears.push({ year: e.year, count: e._count._all });
  }
  for (const site of byId.values()) site.dataKinds.sort();
  return new Map([...byId.values()].map((c) => [c.code, c]));
}

/** Site-years with data over the given sites, and the years they span. */
export function coverageTotals(coverage: Iterable<SiteCoverage>): CoverageTotals {
  let withRecords = 0;
  let estimatesOnly = 0;
  let first = Number.POSITIVE_INFINITY;
  let last = Number.NEGATIVE_INFINITY;
  for (const site of coverage) {
    withRecords += site.broodsByYear.length;
    estimatesOnly += site.estimateOnlyYears.length;
    for (const { year } of [...site.broodsByYear, ...site.estimateOnlyYears]) {
      first = Math.min(first, year);
      last = Math.max(last, year);
    }
  }
  return { siteYearsWithRecords: withRecords, siteYearsWithEstimatesOnly: estimatesOnly, years: Number.isFinite(first) ? { first, last } : null };
}
