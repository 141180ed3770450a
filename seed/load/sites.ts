import type { DbTransaction } from "../../lib/db/client";
import type { SimulatedSite, SpeciesKey } from "../simulate/types";

/** Writes the demo sites with their species and lead; returns site ids by code. */
export async function loadSites(
  db: DbTransaction,
  sites: readonly SimulatedSite[],
  speciesIds: ReadonlyMap<SpeciesKey, number>,
  userIds: ReadonlyMap<string, number>,
): Promise<Map<string, number>> {
  await db.site.createMany({
    data: sites.map((s) => ({
      code: s.code,
      name: s.name,
      speciesId: speciesIds.get(s.speciesKey)!,
      latitude: s.latitude,
      longitude: s.longitude,
      elevationM: s.elevationM,
      habitat: s.habitat,
      firstYear: s.firstYear,
      lastYear: s.lastYear,
      dateConvention: "jan1" as const,
      leadUserId: userIds.get(s.leadEmail)!,
      notes: s.notes,
    })),
  });
  const stored = await db.site.findMany({ where: { code: { in: sites.map((s) => s.code) } }, select: { id: true, code: true } });
  return new Map(stored.map((s) => [s.code, s.id]));
}
