import type { Db } from "../db/client";
import type { SiteScope } from "../auth/policy";
import { AppError } from "../errors/app-error";
import { sharedWhere, type BroodRecordFilter, type Page } from "./record-filters";

export interface BroodRecordListItem {
  id: number;
  siteCode: string;
  species: string;
  year: number;
  femaleId: string;
  layDateDoy: number;
  clutchSize: number;
  hatchDateDoy: number | null;
  fledglings: number;
  recruits: number;
  submissionId: number;
}

const ORDER = [{ site: { code: "asc" as const } }, { year: "asc" as const }, { femaleId: "asc" as const }, { id: "asc" as const }];

/**
 * Refuses a caller who may read no site's rows, and a filter that names rows the caller may not
 * read: a site, or a submission of a site, outside `scope`. (Unknown site codes are not refused:
 * they simply match nothing.)
 */
async function refuseUnreadable(db: Db, filter: BroodRecordFilter, scope: Extract<SiteScope, { allSites: false }>): Promise<void> {
  if (scope.siteIds.length === 0) throw new AppError("forbidden", `${scope.reason}, and you lead no site`);
  const readable = new Set(scope.siteIds);
  if (filter.site?.length) {
    const named = await db.site.findMany({ where: { code: { in: filter.site } }, select: { id: true, code: true } });
    const refused = named.filter((site) => !readable.has(site.id)).map((site) => site.code).sort();
    if (refused.length) {
      throw new AppError("forbidden", `${scope.reason}: ${refused.join(", ")}`, refused.map((code) => ({ field: "query.site", message: "not readable by you", value: code })));
    }
  }
  if (filter.submission !== undefined) {
    const submission = await db.submission.findUnique({ where: { id: filter.submission }, select: { siteId: true, site: { select: { code: true } } } });
    if (submission && !readable.has(submission.siteId)) {
      throw new AppError("forbidden", `${scope.reason}: submission ${filter.submission} is of site ${submission.site.code}`, [
        { field: "query.submission", message: "not readable by you", value: String(filter.submission) },
      ]);
    }
  }
}

/**
 * Brood records matching the filter, by site, year and female; the current submissions' rows
 * unless the filter names a submission. Without `page`, every matching row.
 *
 * `scope` says whose rows the caller may read (see readableSites in lib/auth/policy.ts): a list
 * without a site filter holds only those sites' rows (a site lead's own, in a network that does not
 * share raw records). Refused with AppError forbidden and the policy's reason, so nobody mistakes
 * a refusal for a site without data: a caller who may read no site's rows at all (a viewer, in
 * such a network), and a filter naming a site or submission outside the scope.
 */
export async function listBroodRecords(db: Db, filter: BroodRecordFilter, scope: SiteScope, page?: Page): Promise<{ total: number; items: BroodRecordListItem[] }> {
  if (!scope.allSites) await refuseUnreadable(db, filter, scope);
  const where = { ...sharedWhere(filter), ...(scope.allSites ? {} : { siteId: { in: [...scope.siteIds] } }) };
  const [total, rows] = await Promise.all([
    db.broodRecord.count({ where }),
    db.broodRecord.findMany({
      where,
      orderBy: ORDER,
      include: { site: { select: { code: true, species: { select: { scientificName: true } } } } },
      ...(page ? { take: page.limit, skip: page.offset } : {}),
    }),
  ]);
  const items = rows.map(({ site, siteId: _siteId, ...row }) => ({ ...row, siteCode: site.code, species: site.species.scientificName }));
  return { total, items };
}
