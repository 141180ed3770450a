/**
 * Passwords for the demo accounts: random for each load, hashed into the database and kept in a
 * local file (data/ is not committed) so `npm run seed -- --accounts` can show them again.
 */
import { randomBytes } from "node:crypto";
import { chmodSync, existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { dirname } from "node:path";
import { z } from "zod";
import { hashPassword } from "../lib/auth/password";
import type { SimulatedUser } from "./simulate/types";

export const DEFAULT_ACCOUNTS_PATH = "data/demo-accounts.json";

export interface DemoAccount extends SimulatedUser {
  password: string;
}

const accountsFileSchema = z.object({
  seed: z.number().int(),
  accounts: z.array(z.object({ email: z.string(), displayName: z.string(), role: z.enum(["coordinator", "site_lead", "viewer"]), password: z.string() })),
});

/** A fresh random password (16 URL-safe characters, 96 bits) for each account. */
export function demoAccounts(users: readonly SimulatedUser[]): DemoAccount[] {
  return users.map((user) => ({ ...user, password: randomBytes(12).toString("base64url") }));
}

/** scrypt hashes of the accounts' passwords, by email. */
export async function hashAccountPasswords(accounts: readonly DemoAccount[]): Promise<Map<string, string>> {
  const hashes = await Promise.all(accounts.map((a) => hashPassword(a.password)));
  return new Map(accounts.map((a, i) => [a.email, hashes[i]!]));
}

export function writeAccountsFile(path: string, seed: number, accounts: readonly DemoAccount[]): void {
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, `${JSON.stringify({ seed, accounts }, null, 2)}\n`, { mode: 0o600 });
  chmodSync(path, 0o600);
}

/** The accounts file written by the last load. Throws with a clear message when it is missing or malformed. */
export function readAccountsFile(path: string): { seed: number; accounts: DemoAccount[] } {
  if (!existsSync(path)) throw new Error(`${path} does not exist: the demo accounts are written there when the demo network is loaded`);
  const parsed = accountsFileSchema.safeParse(JSON.parse(readFileSync(path, "utf8")));
  if (!parsed.success) throw new Error(`${path} is not a demo accounts file: ${parsed.error.issues[0]?.message ?? "unreadable"}`);
  return parsed.data;
}

/** The accounts as a table for the terminal, coordinator and viewer first. */
export function formatAccounts(accounts: readonly DemoAccount[]): string {
  const order = { coordinator: 0, viewer: 1, site_lead: 2 } as const;
  const sorted = [...accounts].sort((a, b) => order[a.role] - order[b.role] || a.email.localeCompare(b.email));
  const width = Math.max(...sorted.map((a) => a.email.length));
  return sorted.map((a) => `  ${a.role.padEnd(11)}  ${a.email.padEnd(width)}  ${a.password}`).join("\n");
}
