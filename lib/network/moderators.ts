import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import { AppError } from "../errors/app-error";
import { LATITUDE_MODERATOR_KEY, type ModeratorInput, type ModeratorValueInput } from "./moderator-input";

export interface ModeratorSummary {
  key: string;
  label: string;
  unit: string | null;
  kind: "numeric" | "categorical";
  description: string;
  builtIn: boolean;
  /** Sites with a value (every site, for latitude). */
  siteCount: number;
}

/** The built-in latitude moderator as listed when the database has no row for it. */
const LATITUDE: Omit<ModeratorSummary, "siteCount"> = {
  key: LATITUDE_MODERATOR_KEY,
  label: "Latitude",
  unit: "degrees N",
  kind: "numeric",
  description: "The site's latitude in decimal degrees (WGS84), from the site record.",
  builtIn: true,
};

/** Every moderator, latitude first, then by key, with how many sites have a value. */
export async function listModerators(db: Db): Promise<ModeratorSummary[]> {
  const [moderators, siteCount] = await Promise.all([
    db.moderator.findMany({ orderBy: { key: "asc" }, include: { _count: { select: { values: true } } } }),
    db.site.count(),
  ]);
  const stored = moderators.map((m) => ({
    key: m.key,
    label: m.label,
    unit: m.unit,
    kind: m.kind,
    description: m.description,
    builtIn: m.builtIn,
    siteCount: m.key === LATITUDE_MODERATOR_KEY ? siteCount : m._count.values,
  }));
  const latitude = stored.find((m) => m.key === LATITUDE_MODERATOR_KEY) ?? { ...LATITUDE, siteCount };
  return [latitude, ...stored.filter((m) => m.key !== LATITUDE_MODERATOR_KEY)];
}

/** Adds a moderator, with its audit entry in the same transaction. Throws AppError conflict when the key is taken. */
export async function createModerator(db: Db, input: ModeratorInput, actor: Actor): Promise<ModeratorSummary> {
  return db.$transaction(async (tx) => {
    if (await tx.moderator.findUnique({ where: { key: input.key }, select: { id: true } })) {
      throw new AppError("conflict", `moderator ${input.key} already exists`, [{ field: "key", message: "already in use", value: input.key }]);
    }
    const created = await tx.moderator.create({ data: { ...input, builtIn: false } });
    await recordAudit(tx, actor, { action: "moderator.create", entityType: "Moderator", entityId: created.key, after: input });
    return { key: created.key, label: created.label, unit: created.unit, kind: created.kind, description: created.description, builtIn: false, siteCount: 0 };
  });
}

/**
 * Sets (creates or replaces) one site's value of a moderator, with an audit entry holding the
 * value before and after, in one transaction. The value must match the moderator's kind.
 * Throws not_found for an unknown site or moderator, invalid_input for latitude (edit the site's
 * latitude instead) or a value of the wrong kind.
 */
export async function setModeratorValue(db: Db, siteCode: string, moderatorKey: string, input: ModeratorValueInput, actor: Actor) {
  if (moderatorKey === LATITUDE_MODERATOR_KEY) {
    throw new AppError("invalid_input", "latitude is the site's own latitude; change the site record instead", [
      { field: "key", message: "latitude cannot be set as a moderator value", value: moderatorKey },
    ]);
  }
  const [site, moderator] = await Promise.all([
    db.site.findUnique({ where: { code: siteCode }, select: { id: true } }),
    db.moderator.findUnique({ where: { key: moderatorKey } }),
  ]);
  if (!site) throw new AppError("not_found", `site code ${siteCode} is not in this network`, [{ field: "code", message: "unknown site", value: siteCode }]);
  if (!moderator) throw new AppError("not_found", `moderator ${moderatorKey} does not exist`, [{ field: "key", message: "unknown moderator", value: moderatorKey }]);
  if (moderator.kind === "numeric" && input.numericValue === null) {
    throw new AppError("invalid_input", `${moderatorKey} is numeric: give numericValue`, [{ field: "numericValue", message: "required for a numeric moderator" }]);
  }
  if (moderator.kind === "categorical" && input.categoricalValue === null) {
    throw new AppError("invalid_input", `${moderatorKey} is categorical: give categoricalValue`, [
      { field: "categoricalValue", message: "required for a categorical moderator" },
    ]);
  }
  const data = { ...input };
  const where = { moderatorId_siteId: { moderatorId: moderator.id, siteId: site.id } };
  const saved = await db.$transaction(async (tx) => {
    const previous = await tx.moderatorValue.findUnique({
      where,
      select: { numericValue: true, categoricalValue: true, standardError: true, source: true, method: true },
    });
    const written = await tx.moderatorValue.upsert({ where, create: { ...data, moderatorId: moderator.id, siteId: site.id }, update: data });
    await recordAudit(tx, actor, { action: "moderator_value.set", entityType: "ModeratorValue", entityId: `${siteCode}/${moderatorKey}`, before: previous, after: data });
    return written;
  });
  return { siteCode, moderatorKey, numericValue: saved.numericValue, categoricalValue: saved.categoricalValue, standardError: saved.standardError, source: saved.source, method: saved.method };
}
