import { z } from "zod";
import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { hashPassword, MIN_PASSWORD_LENGTH } from "./password";
import { recordAudit } from "../audit/record-audit";

export const firstCoordinatorSchema = z.object({
  email: z.string().trim().toLowerCase().email("enter a valid email address"),
  displayName: z.string().trim().min(1, "enter your name").max(200),
  password: z.string().min(MIN_PASSWORD_LENGTH, `use at least ${MIN_PASSWORD_LENGTH} characters`).max(1024),
});

/** Whether the network has no accounts yet (first run: the app asks for the coordinator). */
export async function needsFirstCoordinator(db: Db): Promise<boolean> {
  return (await db.user.count()) === 0;
}

/** Creates the first account, a coordinator; refused once any account exists. */
export async function createFirstCoordinator(db: Db, input: z.infer<typeof firstCoordinatorSchema>): Promise<{ userId: number }> {
  const passwordHash = await hashPassword(input.password);
  return db.$transaction(async (tx) => {
    if ((await tx.user.count()) > 0) throw new AppError("conflict", "the network already has accounts; ask its coordinator for one");
    const user = await tx.user.create({ data: { email: input.email, displayName: input.displayName, role: "coordinator", passwordHash } });
    await recordAudit(tx, { kind: "user", userId: user.id, role: "coordinator", label: `${user.displayName} <${user.email}>`, siteIds: [], via: "none" }, {
      action: "user.create_first_coordinator",
      entityType: "User",
      entityId: user.id,
      after: { email: user.email, role: "coordinator" },
    });
    return { userId: user.id };
  });
}
