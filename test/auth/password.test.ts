import { scryptSync } from "node:crypto";
import { describe, expect, it } from "vitest";
import { hashPassword, verifyPassword } from "@/lib/auth/password";

describe("password hashing", () => {
  it("node's scrypt reproduces the RFC 7914 section 12 test vector (password / NaCl, N=1024, r=8, p=16)", () => {
    // Test vector from RFC 7914 (Percival & Josefsson 2016), section 12.
    const key = scryptSync("password", "NaCl", 64, { N: 1024, r: 8, p: 16 });
    expect(key.toString("hex")).toBe(
      "fdbabe1c9d3472007856e7190d01e9fe7c6ad7cbc8237830e77376634b3731622eaf30d92e22a3886ff109279d9830dac727afb94a83ee6d8360cbdfa2cc0640",
    );
  });

  it("verifies the right password and refuses a wrong one", async () => {
    const stored = await hashPassword("correct horse battery");
    expect(stored).toMatch(/^scrypt\$32768\$8\$1\$[A-Za-z0-9+/=]+\$[A-Za-z0-9+/=]+$/);
    expect(await verifyPassword("correct horse battery", stored)).toBe(true);
    expect(await verifyPassword("correct horse batterY", stored)).toBe(false);
  });

  it("salts each hash: the same password hashes differently twice", async () => {
    expect(await hashPassword("same password")).not.toBe(await hashPassword("same password"));
  });

  it("treats a malformed stored hash as a failed match, not an error", async () => {
    for (const bad of ["", "plain", "scrypt$x$8$1$AA==$AA==", "md5$1$2$3$4$5", "scrypt$1024$8$1$AA==$"]) {
      expect(await verifyPassword("anything", bad)).toBe(false);
    }
  });
});
