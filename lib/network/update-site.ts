import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import { AppError } from "../errors/app-error";
import type { SiteUpdate } from "./site-input";

/**
 * Changes a site's metadata (the fields given in `edit`), with an audit entry holding the
 * changed fields before and after, in one transaction. Whether `actor` may (the coordinator, or
 * the site's lead) is checked by the caller's policy gate (site.update).
 *
 * Throws AppError not_found for an unknown code, invalid_input when the edit leaves the last
 * study year before the first. Example: updateSite(db, "OAK", { habitat: "oak-beech" }, actor).
 */
export async function updateSite(db: Db, code: string, edit: SiteUpdate, actor: Actor) {
  return db.$transaction(async (tx) => {
    const site = await tx.site.findUnique({ where: { code } });
    if (!site) throw new AppError("not_found", `site code ${code} is not in this network`, [{ field: "code", message: "unknown site", value: code }]);
    const firstYear = edit.firstYear ?? site.firstYear;
    const lastYear = edit.lastYear ?? site.lastYear;
    if (lastYear < firstYear) {
      throw new AppError("invalid_input", `last year ${lastYear} would be before first year ${firstYear}`, [
        { field: edit.lastYear !== undefined ? "lastYear" : "firstYear", message: `last year ${lastYear} is before first year ${firstYear}` },
      ]);
    }
    const fields = Object.keys(edit) as (keyof SiteUpdate)[];
    const before = Object.fromEntries(fields.map((name) => [name, site[name]]));
    const updated = await tx.site.update({ where: { id: site.id }, data: edit, include: { species: true, leadUser: { select: { displayName: true } } } });
    await recordAudit(tx, actor, { action: "site.update", entityType: "Site", entityId: site.code, before, after: edit });
    return updated;
  });
}
