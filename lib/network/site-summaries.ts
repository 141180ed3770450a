import type { Db } from "../db/client";

export interface SiteSummary {
  code: string;
  name: string;
  speciesScientific: string;
  speciesCommon: string;
  latitude: number;
  longitude: number;
  firstYear: number;
  lastYear: number;
  /** Brood records in the site's current (accepted) submission. */
  broodCount: number;
  /** First and last year with brood records, or null when the site has none. */
  recordYears: { first: number; last: number } | null;
  /** Estimates from current submissions and current computations. */
  estimateCount: number;
}

export interface NetworkTotals {
  sites: number;
  species: number;
  broods: number;
  estimates: number;
}

/** The current rows of a site are those of its accepted submissions. */
const CURRENT = { submission: { status: "accepted" as const } };

/** Every site with its species, coordinates, years covered and counts of current broods and estimates. */
export async function listSiteSummaries(db: Db): Promise<SiteSummary[]> {
  const [sites, broods, estimates] = await Promise.all([
    db.site.findMany({ include: { species: true }, orderBy: { code: "asc" } }),
    db.broodRecord.groupBy({ by: ["siteId"], where: CURRENT, _count: { _all: true }, _min: { year: true }, _max: { year: true } }),
    db.estimate.groupBy({ by: ["siteId"], where: CURRENT, _count: { _all: true } }),
  ]);
  const broodsBySite = new Map(broods.map((b) => [b.siteId, b]));
  const estimatesBySite = new Map(estimates.map((e) => [e.siteId, e._count._all]));
  return sites.map((site) => {
    const b = broodsBySite.get(site.id);
    return {
      code: site.code,
      name: site.name,
      speciesScientific: site.species.scientificName,
      speciesCommon: site.species.commonName,
      latitude: site.latitude,
      longitude: site.longitude,
      firstYear: site.firstYear,
      lastYear: site.lastYear,
      broodCount: b?._count._all ?? 0,
      recordYears: b && b._min.year !== null && b._max.year !== null ? { first: b._min.year, last: b._max.year } : null,
      estimateCount: estimatesBySite.get(site.id) ?? 0,
    };
  });
}

export function networkTotals(summaries: readonly SiteSummary[]): NetworkTotals {
  return {
    sites: summaries.length,
    species: new Set(summaries.map((s) => s.speciesScientific)).size,
    broods: summaries.reduce((sum, s) => sum + s.broodCount, 0),
    estimates: summaries.reduce((sum, s) => sum + s.estimateCount, 0),
  };
}
