import { createHash } from "node:crypto";
import { once } from "node:events";
import { createReadStream, createWriteStream, mkdtempSync, openAsBlob, readdirSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { UPLOAD_FOLDER_PREFIX } from "@/lib/api/multipart-upload";
import { apiRoutes } from "@/lib/api/routes";
import { startSession } from "@/lib/auth/sessions";
import { getDb } from "@/lib/db/client";
import { createTestDatabase, type TestDatabase } from "@/test/helpers/test-databases";
import { callRoute, signInTestCoordinator } from "./call-route";
import { bodyStream, multipartChunks, multipartType, type FormPart } from "./multipart-body";

/**
 * File uploads through POST /api/v1/submissions, called in-process as Next.js calls the route: the
 * multipart body is streamed to a temporary file and checked from there, so a file of tens of MB
 * is stored whole (its rows counted, its SHA-256 equal to node:crypto's of the file) without the
 * body being held in memory; and every refusal (too large, no file, malformed framing, a client
 * that goes away) stores nothing and leaves no temporary file.
 */
const ROWS = 400_000;

let database: TestDatabase;
let scratch: string;
let bigFile: string;
let bigSha256: string;
const savedTmp = process.env.TMPDIR;
const uploadFolders = () => readdirSync(scratch).filter((name) => name.startsWith(UPLOAD_FOLDER_PREFIX));
const submissions = () => database.db.submission.count();

/** Brood records with long ring codes (56 characters), to reach tens of MB in a few hundred thousand rows. */
async function writeBroodFile(path: string, rows: number): Promise<void> {
  const out = createWriteStream(path);
  let buffer = "female,year,lay date,clutch size,hatch date,fledged,recruits\n";
  for (let i = 0; i < rows; i++) {
    const ring = `ring-${String(i).padStart(8, "0")}-`.padEnd(56, "abcdefghij");
    buffer += `${ring},${2001 + (i % 20)},${100 + (i % 40)},${6 + (i % 5)},,${i % 6},${i % 6 > 3 ? 1 : 0}\n`;
    if (buffer.length > 1 << 20) {
      if (!out.write(buffer)) await once(out, "drain");
      buffer = "";
    }
  }
  out.end(buffer);
  await once(out, "finish");
}

async function sha256OfFile(path: string): Promise<string> {
  const hash = createHash("sha256");
  for await (const chunk of createReadStream(path)) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

const streamedForm = (parts: readonly FormPart[], options: { closing?: boolean; failAfter?: number } = {}) => ({
  raw: { body: bodyStream(multipartChunks(parts, undefined, options.closing), options.failAfter), contentType: multipartType() },
});
const smallCsv = "female,year,lay date,clutch size,hatch date,fledged,recruits\nS-1,2010,121,8,,6,1\nS-2,2010,125,7,,5,0\n";

beforeAll(async () => {
  scratch = mkdtempSync(join(tmpdir(), "streamed-upload-test-"));
  database = await createTestDatabase("sqlite");
  process.env.DATABASE_URL = database.url;
  // Only the uploads' own temporary folders land here from now on (os.tmpdir() reads TMPDIR each call).
  process.env.TMPDIR = scratch;
  await signInTestCoordinator(database.db);
  const species = await database.db.species.create({ data: { scientificName: "Cyanistes caeruleus", commonName: "Blue tit" } });
  for (const code of ["BIG", "FLD"]) {
    await database.db.site.create({ data: { code, name: `${code} wood`, speciesId: species.id, latitude: 55, longitude: 12, firstYear: 2000, lastYear: 2021 } });
  }
  bigFile = join(scratch, "big-broods.csv");
  await writeBroodFile(bigFile, ROWS);
  bigSha256 = await sha256OfFile(bigFile);
});
afterAll(async () => {
  if (savedTmp === undefined) delete process.env.TMPDIR;
  else process.env.TMPDIR = savedTmp;
  await getDb().$disconnect();
  await database.drop();
  rmSync(scratch, { recursive: true, force: true });
});

describe("file uploads streamed through the API", () => {
  it("stores a file of tens of MB, streamed from disk by the client, whole and with the SHA-256 of its bytes", async () => {
    const bytes = statSync(bigFile).size;
    expect(bytes).toBeGreaterThan(25 * 1024 * 1024);
    const form = new FormData();
    form.set("siteCode", "BIG");
    form.set("kind", "brood_records");
    // A Blob backed by the file on disk: the platform's FormData encoder streams it, never reading it whole.
    form.set("file", await openAsBlob(bigFile, { type: "text/csv" }), "big-broods.csv");
    global.gc?.();
    const before = process.memoryUsage().rss;
    let peak = before;
    const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 10);
    let reply;
    try {
      reply = await callRoute(apiRoutes.createSubmission, { form });
    } finally {
      clearInterval(sampler);
    }
    console.log(
      `upload of a ${(bytes / 2 ** 20).toFixed(1)} MiB file (${ROWS} rows) through the route: resident memory peaked ${((peak - before) / 2 ** 20).toFixed(1)} MiB above its ${(before / 2 ** 20).toFixed(0)} MiB start`,
    );
    expect(reply.status).toBe(201);
    expect(reply.body.submission).toMatchObject({ siteCode: "BIG", fileName: "big-broods.csv", rowCount: ROWS, sha256: bigSha256 });
    expect(reply.body.unusedHeadings).toEqual([]);
    expect(reply.body.warnings).toEqual([]);
    const id = reply.body.submission.id as number;
    expect(await database.db.broodRecord.count({ where: { submissionId: id } })).toBe(ROWS);
    const last = await database.db.broodRecord.findFirst({ where: { submissionId: id }, orderBy: { id: "desc" } });
    expect(last).toMatchObject({ femaleId: `ring-${String(ROWS - 1).padStart(8, "0")}-`.padEnd(56, "abcdefghij"), year: 2001 + ((ROWS - 1) % 20), layDateDoy: 100 + ((ROWS - 1) % 40) });
    expect(uploadFolders()).toEqual([]);
  });

  it("reads text fields sent after the file", async () => {
    const reply = await callRoute(apiRoutes.createSubmission, streamedForm([{ name: "file", fileName: "after.csv", content: smallCsv }, { name: "kind", value: "brood_records" }, { name: "siteCode", value: "FLD" }]));
    expect(reply.status).toBe(201);
    expect(reply.body.submission).toMatchObject({ siteCode: "FLD", kind: "brood_records", fileName: "after.csv", rowCount: 2, sha256: createHash("sha256").update(smallCsv).digest("hex") });
    expect(uploadFolders()).toEqual([]);
  });

  it("refuses a form without a file, naming the field", async () => {
    const count = await submissions();
    const reply = await callRoute(apiRoutes.createSubmission, streamedForm([{ name: "siteCode", value: "FLD" }, { name: "kind", value: "brood_records" }]));
    expect(reply.status).toBe(422);
    expect(reply.body.error).toMatchObject({ code: "invalid_input", message: "attach the file as the form field 'file'", fieldErrors: [{ field: "file", message: "required" }] });
    expect(await submissions()).toBe(count);
    expect(uploadFolders()).toEqual([]);
  });

  it("refuses a body over PHENOPOOL_MAX_UPLOAD_BYTES plus room for the fields with 413, storing nothing and leaving no temporary file", async () => {
    const saved = process.env.PHENOPOOL_MAX_UPLOAD_BYTES;
    process.env.PHENOPOOL_MAX_UPLOAD_BYTES = "1000";
    const count = await submissions();
    try {
      const line = "O-1,2010,121,8,,6,1\n";
      async function* overLimit() {
        for (let i = 0; i < 4 * 1024; i++) yield new TextEncoder().encode(line.repeat(50));
      }
      const reply = await callRoute(apiRoutes.createSubmission, streamedForm([{ name: "siteCode", value: "FLD" }, { name: "kind", value: "brood_records" }, { name: "file", fileName: "over.csv", content: overLimit }]));
      expect(reply.status).toBe(413);
      expect(reply.body.error.code).toBe("too_large");
      // The limit is the file's 1000 bytes plus 1 MiB for the framing and the text fields.
      expect(reply.body.error.message).toBe("the upload form is more than 1049576 bytes; this server accepts at most 1049576 bytes (1.0 MiB) (set by PHENOPOOL_MAX_UPLOAD_BYTES)");
    } finally {
      if (saved === undefined) delete process.env.PHENOPOOL_MAX_UPLOAD_BYTES;
      else process.env.PHENOPOOL_MAX_UPLOAD_BYTES = saved;
    }
    expect(await submissions()).toBe(count);
    expect(uploadFolders()).toEqual([]);
  });

  it("refuses malformed multipart framing with a clear 422, storing nothing", async () => {
    const count = await submissions();
    const cut = await callRoute(apiRoutes.createSubmission, streamedForm([{ name: "siteCode", value: "FLD" }, { name: "kind", value: "brood_records" }, { name: "file", fileName: "cut.csv", content: smallCsv }], { closing: false }));
    expect(cut.status).toBe(422);
    expect(cut.body.error).toMatchObject({ code: "invalid_input", fieldErrors: [{ field: "(body)" }] });
    expect(cut.body.error.message).toMatch(/^the form could not be read as multipart\/form-data: Unexpected end of (form|file)$/);
    const noBoundary = await callRoute(apiRoutes.createSubmission, { raw: { body: "siteCode=FLD", contentType: "multipart/form-data" } });
    expect(noBoundary.status).toBe(422);
    expect(noBoundary.body.error.message).toBe("the form could not be read as multipart/form-data: Multipart: Boundary not found");
    expect(await submissions()).toBe(count);
    expect(uploadFolders()).toEqual([]);
  });

  it("refuses an account that may upload to no site before reading its body (403, nothing on disk)", async () => {
    const viewer = await database.db.user.create({ data: { email: "viewer@example.org", displayName: "Viewer", role: "viewer" } });
    const session = await startSession(database.db, viewer.id);
    const count = await submissions();
    let bytesPulled = 0;
    async function* rows() {
      for (let i = 0; i < 100; i++) {
        bytesPulled += 1;
        yield new TextEncoder().encode("V-1,2010,121,8,,6,1\n".repeat(2000));
      }
    }
    const reply = await callRoute(apiRoutes.createSubmission, {
      as: { sessionSecret: session.secret },
      ...streamedForm([{ name: "siteCode", value: "FLD" }, { name: "kind", value: "brood_records" }, { name: "file", fileName: "viewer.csv", content: rows }]),
    });
    expect(reply.status).toBe(403);
    expect(reply.body.error.message).toBe("viewers have read-only access");
    expect(bytesPulled).toBeLessThan(100);
    expect(await submissions()).toBe(count);
    expect(uploadFolders()).toEqual([]);
  });

  it("stores nothing and removes the partial file when the client goes away mid-upload", async () => {
    const count = await submissions();
    const line = new TextEncoder().encode("G-1,2010,121,8,,6,1\n".repeat(2000));
    async function* rows() {
      for (let i = 0; i < 100; i++) yield line;
    }
    const reply = await callRoute(apiRoutes.createSubmission, streamedForm([{ name: "siteCode", value: "FLD" }, { name: "kind", value: "brood_records" }, { name: "file", fileName: "gone.csv", content: rows }], { failAfter: 500_000 }));
    expect(reply.status).toBe(422);
    expect(await submissions()).toBe(count);
    expect(uploadFolders()).toEqual([]);
  });
});
