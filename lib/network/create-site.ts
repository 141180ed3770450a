import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import { AppError } from "../errors/app-error";
import type { SiteInput } from "./site-input";

/**
 * Adds a study site, creating its species on first use, with its audit entry in the same
 * transaction. Throws AppError conflict when the code is taken, or when the scientific name is
 * known under another common name. Whether `actor` may do this is checked by the caller's policy
 * gate (site.create).
 */
export async function createSite(db: Db, input: SiteInput, actor: Actor) {
  return db.$transaction(async (tx) => {
    if (await tx.site.findUnique({ where: { code: input.code }, select: { id: true } })) {
      throw new AppError("conflict", `site code ${input.code} is already in use`, [{ field: "code", message: "already in use", value: input.code }]);
    }
    let species = await tx.species.findUnique({ where: { scientificName: input.species.scientificName } });
    if (species && species.commonName !== input.species.commonName) {
      throw new AppError("conflict", `${species.scientificName} is already in the network as '${species.commonName}'`, [
        { field: "species.commonName", message: `the network calls this species '${species.commonName}'`, value: input.species.commonName },
      ]);
    }
    species ??= await tx.species.create({ data: input.species });
    const { species: _species, ...fields } = input;
    const site = await tx.site.create({ data: { ...fields, speciesId: species.id }, include: { species: true } });
    await recordAudit(tx, actor, { action: "site.create", entityType: "Site", entityId: site.code, after: input });
    return site;
  });
}
