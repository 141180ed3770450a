import { randomBytes, scrypt as scryptCallback, timingSafeEqual, type ScryptOptions } from "node:crypto";

/**
 * Password hashing with scrypt, a memory-hard function (Percival 2009; RFC 7914), from node:crypto.
 * Stored form: `scrypt$N$r$p$<salt base64>$<hash base64>`, so parameters can be raised later
 * and old hashes still verify. Each password gets its own 16-byte random salt.
 */
const COST = 2 ** 15; // N: 32 MiB of memory per hash with r = 8
const BLOCK_SIZE = 8;
const PARALLELISM = 1;
const KEY_LENGTH = 32;
const MAX_MEMORY = 128 * COST * BLOCK_SIZE * 2;

export const MIN_PASSWORD_LENGTH = 10;

function scrypt(password: string, salt: Buffer, keyLength: number, options: ScryptOptions): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    scryptCallback(password, salt, keyLength, options, (error, key) => (error ? reject(error) : resolve(key)));
  });
}

export async function hashPassword(password: string): Promise<string> {
  const salt = randomBytes(16);
  const key = await scrypt(password, salt, KEY_LENGTH, { N: COST, r: BLOCK_SIZE, p: PARALLELISM, maxmem: MAX_MEMORY });
  return ["scrypt", COST, BLOCK_SIZE, PARALLELISM, salt.toString("base64"), key.toString("base64")].join("$");
}

/** True when `password` matches `stored`; false for a wrong password or a malformed hash. Constant-time compare. */
export async function verifyPassword(password: string, stored: string): Promise<boolean> {
  const parts = stored.split("$");
  if (parts.length !== 6 || parts[0] !== "scrypt") return false;
  const [, n, r, p, saltText, keyText] = parts as [string, string, string, string, string, string];
  const cost = Number(n);
  const blockSize = Number(r);
  const parallelism = Number(p);
  if (![cost, blockSize, parallelism].every((v) => Number.isInteger(v) && v > 0)) return false;
  const expected = Buffer.from(keyText, "base64");
  if (expected.length === 0) return false;
  const key = await scrypt(password, Buffer.from(saltText, "base64"), expected.length, {
    N: cost,
    r: blockSize,
    p: parallelism,
    maxmem: 128 * cost * blockSize * 2,
  });
  return timingSafeEqual(key, expected);
}
