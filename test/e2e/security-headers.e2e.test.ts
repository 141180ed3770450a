import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { actorForUser, type Actor } from "@/lib/auth/actor";
import { createApiToken } from "@/lib/auth/api-tokens";
import { createDb } from "@/lib/db/client";
import { migrateDatabase } from "@/lib/db/migrate";
import { startServer, type RunningServer } from "./harness";

/**
 * What the production server sends with every response, and the limits it states: a content
 * security policy that allows only this origin and no framing (W3C CSP Level 3, frame-ancestors),
 * nosniff (WHATWG Fetch, X-Content-Type-Options), a referrer policy (W3C Referrer Policy),
 * X-Frame-Options DENY for older browsers (RFC 7034), no X-Powered-By; the limits on uploads and
 * JSON bodies printed at start, and a JSON body over its limit refused with 413 (RFC 9110
 * section 15.5.14) naming the limit.
 */
describe("security headers and request limits of the production server", () => {
  let dir: string;
  let server: RunningServer;
  let token: string;

  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), "phenopool-headers-"));
    const databaseUrl = `file:${join(dir, "headers.db")}`;
    await migrateDatabase(databaseUrl);
    const db = createDb(databaseUrl);
    try {
      const user = await db.user.create({ data: { email: "coordinator@example.org", displayName: "Coordinator", role: "coordinator" } });
      token = (await createApiToken(db, (await actorForUser(db, user.id, "session")) as Actor, { name: "headers test" })).secret;
    } finally {
      await db.$disconnect();
    }
    server = await startServer({ databaseUrl, env: { PHENOPOOL_MAX_JSON_BODY_BYTES: "1000", PHENOPOOL_MAX_UPLOAD_ROWS: "5000" } });
  });
  afterAll(async () => {
    await server?.kill("SIGTERM");
    rmSync(dir, { recursive: true, force: true });
  });

  const expectSecurityHeaders = (response: Response, what: string) => {
    const csp = response.headers.get("content-security-policy") ?? "";
    const directives = new Map(csp.split(";").map((d) => d.trim().split(/\s+/)).map(([name, ...values]) => [name!, values.join(" ")]));
    expect(directives.get("default-src"), `${what}: default-src`).toBe("'self'");
    expect(directives.get("frame-ancestors"), `${what}: frame-ancestors`).toBe("'none'");
    expect(directives.get("object-src"), `${what}: object-src`).toBe("'none'");
    expect(directives.get("base-uri"), `${what}: base-uri`).toBe("'self'");
    expect(directives.get("form-action"), `${what}: form-action`).toBe("'self'");
    expect(directives.get("script-src"), `${what}: scripts from this origin only`).not.toMatch(/https?:|\*/);
    expect(response.headers.get("x-content-type-options"), what).toBe("nosniff");
    expect(response.headers.get("referrer-policy"), what).toBe("strict-origin-when-cross-origin");
    expect(response.headers.get("x-frame-options"), what).toBe("DENY");
    expect(response.headers.get("x-powered-by"), what).toBeNull();
  };

  it("sends them on pages, API replies, errors and unknown paths", async () => {
    const targets: [string, RequestInit, number][] = [
      ["/sign-in", {}, 200],
      ["/api/v1/openapi.json", {}, 200],
      ["/api/v1/sites", {}, 401],
      ["/api/v1/sites", { headers: { authorization: `Bearer ${token}` } }, 200],
      ["/no-such-page", {}, 404],
    ];
    for (const [path, init, status] of targets) {
      const response = await fetch(`${server.baseUrl}${path}`, { ...init, redirect: "manual" });
      await response.arrayBuffer();
      expect(response.status, path).toBe(status);
      expectSecurityHeaders(response, path);
    }
  });

  it("states its limits when it starts and refuses a JSON body over PHENOPOOL_MAX_JSON_BODY_BYTES with 413", async () => {
    expect(server.output()).toMatch(/PhenoPool: limits: uploads up to \d+ bytes \(PHENOPOOL_MAX_UPLOAD_BYTES\) and 5000 rows \(PHENOPOOL_MAX_UPLOAD_ROWS\); JSON bodies up to 1000 bytes \(PHENOPOOL_MAX_JSON_BODY_BYTES\)/);
    const rows = Array.from({ length: 50 }, (_, i) => ({ year: 2001, femaleId: `F-${i}`, layDateDoy: 110, clutchSize: 8, fledglings: 5, recruits: 1 }));
    const response = await fetch(`${server.baseUrl}/api/v1/submissions`, {
      method: "POST",
      headers: { authorization: `Bearer ${token}`, "content-type": "application/json" },
      body: JSON.stringify({ siteCode: "NONE", kind: "brood_records", rows }),
    });
    expect(response.status).toBe(413);
    const body = (await response.json()) as { error: { code: string; message: string } };
    expect(body.error.code).toBe("too_large");
    expect(body.error.message).toMatch(/this server accepts at most 1000 bytes \(set by PHENOPOOL_MAX_JSON_BODY_BYTES\)/);
    expectSecurityHeaders(response, "413 reply");
  });
});
