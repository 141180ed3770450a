import type { Db } from "../db/client";

/**
 * Failed sign-ins are limited per account and per address over a sliding window, counted from
 * the SignInAttempt table so every server process sees the same counts. Limits are common
 * practice (in the spirit of OWASP's authentication guidance), not a published standard.
 */
export const SIGN_IN_WINDOW_MS = 15 * 60 * 1000;
export const MAX_FAILURES_PER_ACCOUNT = 5;
export const MAX_FAILURES_PER_ADDRESS = 20;

export interface RateLimitState {
  limited: boolean;
  /** When the oldest counted failure leaves the window, if limited. */
  retryAfter: Date | null;
}

export async function signInRateLimit(db: Db, email: string, address: string, now = new Date()): Promise<RateLimitState> {
  const since = new Date(now.getTime() - SIGN_IN_WINDOW_MS);
  const [byAccount, byAddress] = await Promise.all([
    db.signInAttempt.findMany({ where: { email, succeeded: false, at: { gt: since } }, orderBy: { at: "asc" }, select: { at: true } }),
    db.signInAttempt.findMany({ where: { address, succeeded: false, at: { gt: since } }, orderBy: { at: "asc" }, select: { at: true } }),
  ]);
  const limitedBy = byAccount.length >= MAX_FAILURES_PER_ACCOUNT ? byAccount : byAddress.length >= MAX_FAILURES_PER_ADDRESS ? byAddress : null;
  if (!limitedBy) return { limited: false, retryAfter: null };
  const oldest = limitedBy[limitedBy.length - (limitedBy === byAccount ? MAX_FAILURES_PER_ACCOUNT : MAX_FAILURES_PER_ADDRESS)]!.at;
  return { limited: true, retryAfter: new Date(oldest.getTime() + SIGN_IN_WINDOW_MS) };
}

export async function recordSignInAttempt(db: Db, email: string, address: string, succeeded: boolean, now = new Date()): Promise<void> {
  await db.signInAttempt.create({ data: { email, address, succeeded, at: now } });
}
