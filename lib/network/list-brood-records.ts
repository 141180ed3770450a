import type { Db } from "../db/client";
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
 * Brood records matching the filter, by site, year and female; the current submissions' rows
 * unless the filter names a submission. Without `page`, every matching row.
 */
export async function listBroodRecords(db: Db, filter: BroodRecordFilter, page?: Page): Promise<{ total: number; items: BroodRecordListItem[] }> {
  const where = sharedWhere(filter);
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
