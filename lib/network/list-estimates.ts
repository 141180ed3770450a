import type { Db } from "../db/client";
import { sharedWhere, type EstimateFilter, type Page } from "./record-filters";

export interface EstimateListItem {
  id: number;
  siteCode: string;
  species: string;
  outcome: string;
  level: string;
  term: string;
  year: number | null;
  value: number;
  standardError: number;
  n: number;
  scale: string;
  link: string;
  source: string;
  method: string;
  submissionId: number | null;
  createdAt: Date;
}

/** The Prisma filter for estimates: the shared filters plus the estimate vocabulary. */
export function estimateWhere(filter: EstimateFilter) {
  return {
    ...sharedWhere(filter),
    ...(filter.outcome?.length ? { outcome: { in: filter.outcome } } : {}),
    ...(filter.level?.length ? { level: { in: filter.level } } : {}),
    ...(filter.term?.length ? { term: { in: filter.term } } : {}),
    ...(filter.scale?.length ? { scale: { in: filter.scale } } : {}),
    ...(filter.source?.length ? { source: { in: filter.source } } : {}),
  };
}

/**
 * Estimates matching the filter, ordered by site, outcome, level, term and year; those of the
 * sites' current submissions unless the filter names a submission. Without `page`, every match.
 */
export async function listEstimates(db: Db, filter: EstimateFilter, page?: Page): Promise<{ total: number; items: EstimateListItem[] }> {
  const where = estimateWhere(filter);
  const [total, rows] = await Promise.all([
    db.estimate.count({ where }),
    db.estimate.findMany({
      where,
      orderBy: [{ site: { code: "asc" } }, { outcome: "asc" }, { level: "asc" }, { term: "asc" }, { year: { sort: "asc", nulls: "first" } }, { id: "asc" }],
      include: { site: { select: { code: true, species: { select: { scientificName: true } } } } },
      ...(page ? { take: page.limit, skip: page.offset } : {}),
    }),
  ]);
  const items = rows.map(({ site, siteId: _siteId, ...row }) => ({ ...row, siteCode: site.code, species: site.species.scientificName }));
  return { total, items };
}
