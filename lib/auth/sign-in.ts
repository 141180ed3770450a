import { z } from "zod";
import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { verifyPassword } from "./password";
import { recordSignInAttempt, signInRateLimit } from "./sign-in-rate-limit";
import { startSession, type NewSession } from "./sessions";
import { actorForUser } from "./actor";
import { recordAudit } from "../audit/record-audit";

export const signInSchema = z.object({
  email: z.string().trim().toLowerCase().email("enter the email address of your account"),
  password: z.string().min(1, "enter your password").max(1024),
});
export type SignInInput = z.infer<typeof signInSchema>;

export interface SignInOptions {
  /** The client's address, for the per-address limit. */
  address: string;
  /** The session cookie the browser already held, ended on success (rotation). */
  previousSecret?: string;
  now?: Date;
}

/**
 * Checks the rate limits, then the password; on success starts a rotated session.
 * Wrong email and wrong password give the same message, so accounts cannot be probed.
 */
export async function signIn(db: Db, input: SignInInput, options: SignInOptions): Promise<NewSession & { userId: number }> {
  const now = options.now ?? new Date();
  const limit = await signInRateLimit(db, input.email, options.address, now);
  if (limit.limited) {
    throw new AppError("too_many_requests", `too many failed sign-ins; try again after ${limit.retryAfter!.toISOString()}`);
  }
  const user = await db.user.findUnique({ where: { email: input.email } });
  const ok = Boolean(user && user.active && user.passwordHash && (await verifyPassword(input.password, user.passwordHash)));
  await recordSignInAttempt(db, input.email, options.address, ok, now);
  if (!ok || !user) throw new AppError("unauthenticated", "email or password is not right");
  const session = await startSession(db, user.id, options.previousSecret, now);
  const actor = await actorForUser(db, user.id, "session");
  if (actor) await recordAudit(db, actor, { action: "user.sign_in", entityType: "User", entityId: user.id }, now);
  return { ...session, userId: user.id };
}
