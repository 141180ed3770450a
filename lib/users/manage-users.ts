import { z } from "zod";
import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import type { Actor } from "../auth/actor";
import { hashPassword, MIN_PASSWORD_LENGTH } from "../auth/password";
import { endAllSessions } from "../auth/sessions";
import { recordAudit } from "../audit/record-audit";
import { authorize } from "../auth/policy";
import { readNetworkSettings } from "../settings/network-settings";

export const roleSchema = z.enum(["coordinator", "site_lead", "viewer"]);

export const createUserSchema = z.object({
  email: z.string().trim().toLowerCase().email("enter a valid email address"),
  displayName: z.string().trim().min(1, "enter a name").max(200),
  role: roleSchema,
  password: z.string().min(MIN_PASSWORD_LENGTH, `use at least ${MIN_PASSWORD_LENGTH} characters`).max(1024),
});

export const updateUserSchema = z.object({
  role: roleSchema.optional(),
  active: z.boolean().optional(),
  /** Site codes this user leads (replaces the current set). */
  leadsSites: z.array(z.string().trim().min(1)).optional(),
});

async function requireCoordinator(db: Db, actor: Actor): Promise<void> {
  authorize(actor, "user.manage", {}, await readNetworkSettings(db));
}

/** Creates an account (coordinator only). Refuses a duplicate email. */
export async function createUser(db: Db, actor: Actor, input: z.infer<typeof createUserSchema>): Promise<{ userId: number }> {
  await requireCoordinator(db, actor);
  const passwordHash = await hashPassword(input.password);
  return db.$transaction(async (tx) => {
    if (await tx.user.findUnique({ where: { email: input.email } })) throw new AppError("conflict", `an account for ${input.email} exists already`, [{ field: "email", message: "already in use" }]);
    const user = await tx.user.create({ data: { email: input.email, displayName: input.displayName, role: input.role, passwordHash } });
    await recordAudit(tx, actor, { action: "user.create", entityType: "User", entityId: user.id, after: { email: user.email, displayName: user.displayName, role: user.role } });
    return { userId: user.id };
  });
}

/**
 * Changes a user's role, deactivates or reactivates them, or sets the sites they lead
 * (coordinator only). A deactivated user's sessions end at once. The last active coordinator
 * cannot be demoted or deactivated: the network would have nobody to manage it.
 */
export async function updateUser(db: Db, actor: Actor, userId: number, input: z.infer<typeof updateUserSchema>): Promise<void> {
  await requireCoordinator(db, actor);
  await db.$transaction(async (tx) => {
    const user = await tx.user.findUnique({ where: { id: userId }, include: { sitesLed: { select: { code: true } } } });
    if (!user) throw new AppError("not_found", `no user ${userId}`);
    const losesCoordinator = user.role === "coordinator" && user.active && ((input.role && input.role !== "coordinator") || input.active === false);
    if (losesCoordinator && (await tx.user.count({ where: { role: "coordinator", active: true } })) <= 1) {
      throw new AppError("conflict", "this is the network's only active coordinator; make another coordinator first");
    }
    const before = { role: user.role, active: user.active, leadsSites: user.sitesLed.map((s) => s.code).sort() };
    await tx.user.update({ where: { id: userId }, data: { ...(input.role ? { role: input.role } : {}), ...(input.active !== undefined ? { active: input.active } : {}) } });
    if (input.leadsSites) {
      const sites = await tx.site.findMany({ where: { code: { in: input.leadsSites } }, select: { id: true, code: true } });
      const missing = input.leadsSites.filter((code) => !sites.some((s) => s.code === code));
      if (missing.length) throw new AppError("invalid_input", `unknown site codes: ${missing.join(", ")}`, missing.map((code) => ({ field: "leadsSites", message: `site code ${code} is not in this network`, value: code })));
      await tx.site.updateMany({ where: { leadUserId: userId, code: { notIn: input.leadsSites } }, data: { leadUserId: null } });
      await tx.site.updateMany({ where: { code: { in: input.leadsSites } }, data: { leadUserId: userId } });
    }
    const after = { role: input.role ?? user.role, active: input.active ?? user.active, leadsSites: (input.leadsSites ?? before.leadsSites).slice().sort() };
    await recordAudit(tx, actor, { action: "user.update", entityType: "User", entityId: userId, before, after });
  });
  if (input.active === false) await endAllSessions(db, userId);
}

export async function listUsers(db: Db, actor: Actor) {
  await requireCoordinator(db, actor);
  return db.user.findMany({
    orderBy: [{ role: "asc" }, { displayName: "asc" }],
    select: { id: true, email: true, displayName: true, role: true, active: true, createdAt: true, sitesLed: { select: { code: true }, orderBy: { code: "asc" } } },
  });
}
