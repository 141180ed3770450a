import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiRoutes } from "@/lib/api/routes";
import { receiveMultipartUpload } from "@/lib/api/multipart-upload";
import { bodyLimitsFromEnv, readJsonBody, type BodyLimits } from "@/lib/api/request-input";
import { DEFAULT_MAX_JSON_BODY_BYTES, DEFAULT_MAX_UPLOAD_BYTES, readEnv } from "@/lib/config/env";
import { getDb } from "@/lib/db/client";
import { callRoute, signInTestCoordinator } from "@/test/api/call-route";
import { createTestDatabase, type TestDatabase } from "@/test/helpers/test-databases";
import { refusal } from "@/test/helpers/app-error-refusal";

/**
 * The API's request body limits: set from the environment, refused with HTTP 413 (RFC 9110
 * section 15.5.14, Content Too Large) and a message naming the limit and the variable that sets
 * it, before the body is read when Content-Length tells, and while it streams in otherwise.
 */
const limits: BodyLimits = { jsonBytes: 100, formBytes: 400, jsonVariable: "PHENOPOOL_MAX_JSON_BODY_BYTES", formVariable: "PHENOPOOL_MAX_UPLOAD_BYTES" };

function streamed(text: string, chunk = 16): ReadableStream<Uint8Array> {
  const bytes = new TextEncoder().encode(text);
  let at = 0;
  return new ReadableStream({
    pull(controller) {
      if (at >= bytes.length) return controller.close();
      controller.enqueue(bytes.slice(at, at + chunk));
      at += chunk;
    },
  });
}

describe("request body limits", () => {
  it("come from the environment, with documented defaults, and malformed values are named", () => {
    expect(bodyLimitsFromEnv().jsonBytes).toBe(readEnv().PHENOPOOL_MAX_JSON_BODY_BYTES);
    const env = (variables: Record<string, string>) => variables as unknown as NodeJS.ProcessEnv;
    expect(readEnv(env({})).PHENOPOOL_MAX_JSON_BODY_BYTES).toBe(DEFAULT_MAX_JSON_BODY_BYTES);
    expect(readEnv(env({ PHENOPOOL_MAX_JSON_BODY_BYTES: "2048" })).PHENOPOOL_MAX_JSON_BODY_BYTES).toBe(2048);
    expect(() => readEnv(env({ PHENOPOOL_MAX_JSON_BODY_BYTES: "64MB" }))).toThrow(/PHENOPOOL_MAX_JSON_BODY_BYTES must be a whole number/);
    // An upload form may be as large as the upload limit plus room for its other fields.
    const saved = process.env.PHENOPOOL_MAX_UPLOAD_BYTES;
    delete process.env.PHENOPOOL_MAX_UPLOAD_BYTES;
    try {
      expect(bodyLimitsFromEnv().formBytes).toBe(DEFAULT_MAX_UPLOAD_BYTES + 1024 * 1024);
    } finally {
      if (saved !== undefined) process.env.PHENOPOOL_MAX_UPLOAD_BYTES = saved;
    }
  });

  it("refuse a JSON body over the limit from its Content-Length, naming the limit and its variable", async () => {
    const body = JSON.stringify({ rows: "x".repeat(200) });
    const request = new Request("http://localhost/api", { method: "POST", body, headers: { "content-type": "application/json", "content-length": String(body.length) } });
    const error = await refusal(readJsonBody(request, limits));
    expect(error.code).toBe("too_large");
    expect(error.httpStatus).toBe(413);
    expect(error.message).toBe(`the JSON body is ${body.length} bytes; this server accepts at most 100 bytes (set by PHENOPOOL_MAX_JSON_BODY_BYTES)`);
  });

  it("refuse a streamed JSON body without Content-Length as soon as it passes the limit, counting bytes not characters", async () => {
    // 60 two-byte characters: 120 bytes of UTF-8, 60 characters.
    const text = JSON.stringify("é".repeat(60));
    const request = new Request("http://localhost/api", { method: "POST", body: streamed(text), headers: { "content-type": "application/json" }, duplex: "half" } as RequestInit);
    expect(request.headers.get("content-length")).toBeNull();
    const error = await refusal(readJsonBody(request, limits));
    expect(error.code).toBe("too_large");
    expect(error.message).toMatch(/more than 100 bytes; this server accepts at most 100 bytes/);
    // Within the limit the same way of sending is read whole.
    const small = new Request("http://localhost/api", { method: "POST", body: streamed('{"a":[1,2,3]}', 4), headers: { "content-type": "application/json" }, duplex: "half" } as RequestInit);
    expect((await readJsonBody(small, limits)).value).toEqual({ a: [1, 2, 3] });
  });

  it("refuse an upload form over the upload limit, naming PHENOPOOL_MAX_UPLOAD_BYTES", async () => {
    const form = new FormData();
    form.set("file", new File(["f".repeat(1000)], "big.csv"));
    const request = new Request("http://localhost/api", { method: "POST", body: form });
    const fields = { file: "file", text: ["siteCode"] };
    const error = await refusal(receiveMultipartUpload(request, fields, limits));
    expect(error.code).toBe("too_large");
    expect(error.message).toBe("the upload form is more than 400 bytes; this server accepts at most 400 bytes (set by PHENOPOOL_MAX_UPLOAD_BYTES)");
    const ok = new FormData();
    ok.set("siteCode", "OAK");
    const received = await receiveMultipartUpload(new Request("http://localhost/api", { method: "POST", body: ok }), fields, limits);
    expect(received.fields.get("siteCode")).toBe("OAK");
    await received.dispose();
  });
});

describe("a JSON body over PHENOPOOL_MAX_JSON_BODY_BYTES at the API", () => {
  let database: TestDatabase;
  const saved = process.env.PHENOPOOL_MAX_JSON_BODY_BYTES;
  beforeAll(async () => {
    database = await createTestDatabase("sqlite");
    process.env.DATABASE_URL = database.url;
    await signInTestCoordinator(database.db);
    process.env.PHENOPOOL_MAX_JSON_BODY_BYTES = "2000";
  });
  afterAll(async () => {
    if (saved === undefined) delete process.env.PHENOPOOL_MAX_JSON_BODY_BYTES;
    else process.env.PHENOPOOL_MAX_JSON_BODY_BYTES = saved;
    await getDb().$disconnect();
    await database.drop();
  });

  it("is refused with 413 and the error body, and nothing is written", async () => {
    const rows = Array.from({ length: 100 }, (_, i) => ({ year: 2001, femaleId: `F-${i}`, layDateDoy: 110, clutchSize: 8, fledglings: 5, recruits: 1 }));
    const reply = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OAK", kind: "brood_records", rows } });
    expect(reply.status).toBe(413);
    expect(reply.body.error.code).toBe("too_large");
    expect(reply.body.error.message).toMatch(/this server accepts at most 2000 bytes \(set by PHENOPOOL_MAX_JSON_BODY_BYTES\)/);
    expect(await database.db.submission.count()).toBe(0);
  });
});
