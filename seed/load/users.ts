import type { DbTransaction } from "../../lib/db/client";
import type { SimulatedUser } from "../simulate/types";

/**
 * Writes the demo accounts (coordinator, site leads, viewer). `passwordHashes` (by email) lets
 * them sign in; without it they exist but cannot. Returns user ids by email.
 */
export async function loadUsers(db: DbTransaction, users: readonly SimulatedUser[], passwordHashes?: ReadonlyMap<string, string>): Promise<Map<string, number>> {
  await db.user.createMany({
    data: users.map((u) => ({ email: u.email, displayName: u.displayName, role: u.role, passwordHash: passwordHashes?.get(u.email) ?? null })),
  });
  const stored = await db.user.findMany({ where: { email: { in: users.map((u) => u.email) } }, select: { id: true, email: true } });
  return new Map(stored.map((u) => [u.email, u.id]));
}
