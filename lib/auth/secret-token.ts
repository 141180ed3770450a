import { createHash, randomBytes } from "node:crypto";

/**
 * Random bearer secrets (session cookies, API tokens). Only the SHA-256 of a secret is stored,
 * so a copy of the database does not let anyone sign in.
 */
export function newSecret(prefix: string): string {
  return `${prefix}${randomBytes(32).toString("base64url")}`;
}

export function hashSecret(secret: string): string {
  return createHash("sha256").update(secret).digest("hex");
}
