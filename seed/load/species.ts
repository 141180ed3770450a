import type { DbTransaction } from "../../lib/db/client";
import type { SimulatedSpecies, SpeciesKey } from "../simulate/types";

/** Writes the demo species; returns their ids by species key. */
export async function loadSpecies(db: DbTransaction, species: readonly SimulatedSpecies[]): Promise<Map<SpeciesKey, number>> {
  await db.species.createMany({ data: species.map(({ scientificName, commonName }) => ({ scientificName, commonName })) });
  const stored = await db.species.findMany({ where: { scientificName: { in: species.map((s) => s.scientificName) } } });
  const idByName = new Map(stored.map((s) => [s.scientificName, s.id]));
  return new Map(species.map((s) => [s.key, idByName.get(s.scientificName)!]));
}
