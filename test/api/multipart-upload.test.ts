import { createHash } from "node:crypto";
import { createReadStream, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { multipartFieldsOf, receiveMultipartUpload, UPLOAD_FOLDER_PREFIX, type MultipartFields } from "@/lib/api/multipart-upload";
import type { BodyLimits } from "@/lib/api/request-input";
import { uploadFormSchema } from "@/lib/submissions/upload-form";
import { bodyStream, multipartChunks, multipartRequest, multipartType, TEST_BOUNDARY } from "./multipart-body";
import { refusal } from "@/test/helpers/app-error-refusal";

/**
 * Receiving a multipart/form-data upload (RFC 7578) without holding it in memory: the file part
 * lands byte for byte in a private temporary file (checked by its SHA-256 from node:crypto against
 * the bytes sent), text fields before and after it are kept, the body is counted against the form
 * limit, and every refusal (too large, malformed framing, unexpected parts, a client that goes
 * away) leaves no temporary file behind.
 */
const FIELDS: MultipartFields = multipartFieldsOf(uploadFormSchema);
const LIMITS: BodyLimits = { jsonBytes: 1000, formBytes: 4096, jsonVariable: "PHENOPOOL_MAX_JSON_BODY_BYTES", formVariable: "PHENOPOOL_MAX_UPLOAD_BYTES" };
const LARGE: BodyLimits = { ...LIMITS, formBytes: 512 * 1024 * 1024 };

const sha256 = (bytes: Uint8Array | string) => createHash("sha256").update(bytes).digest("hex");
async function sha256OfFile(path: string): Promise<string> {
  const hash = createHash("sha256");
  for await (const chunk of createReadStream(path)) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

let scratch: string;
const savedTmp = process.env.TMPDIR;
const uploadFolders = () => readdirSync(scratch).filter((name) => name.startsWith(UPLOAD_FOLDER_PREFIX));

beforeAll(() => {
  // os.tmpdir() reads TMPDIR on every call: a private one lets these tests see every folder made.
  scratch = mkdtempSync(join(tmpdir(), "multipart-test-"));
  process.env.TMPDIR = scratch;
});
afterAll(() => {
  if (savedTmp === undefined) delete process.env.TMPDIR;
  else process.env.TMPDIR = savedTmp;
  rmSync(scratch, { recursive: true, force: true });
});

describe("receiving a multipart upload", () => {
  it("takes its parts from the upload schema: the binary field is the file", () => {
    expect(FIELDS.file).toBe("file");
    expect([...FIELDS.text].sort()).toEqual(["decimalComma", "delimiter", "expectedCurrentSubmissionId", "expectedSha256", "kind", "mapping", "sheet", "siteCode"]);
  });

  it("writes the file byte for byte to a private temporary file and keeps fields sent before and after it", async () => {
    // Content that looks like framing but is not the boundary: dashes, CRLFs, a near-boundary.
    const content = `female,year\r\n--not-the-boundary\r\n\r\n--${TEST_BOUNDARY.slice(0, -1)}\r\nB-1,2010\r\n\u00e9t\u00e9,2011\n`;
    const request = multipartRequest([
      { name: "siteCode", value: "BIR" },
      { name: "file", fileName: "h\u00e4cke-broods.csv", content },
      { name: "kind", value: "brood_records" },
      { name: "mapping", value: '{"femaleId":"female"}' },
    ]);
    const upload = await receiveMultipartUpload(request, FIELDS, LIMITS);
    try {
      expect(Object.fromEntries(upload.fields)).toEqual({ siteCode: "BIR", kind: "brood_records", mapping: '{"femaleId":"female"}' });
      expect(upload.file).toMatchObject({ fileName: "h\u00e4cke-broods.csv", byteCount: Buffer.byteLength(content) });
      // The reference: SHA-256 of the bytes sent, by node:crypto.
      expect(await sha256OfFile(upload.file!.path)).toBe(sha256(content));
      expect(upload.file!.path.startsWith(join(scratch, UPLOAD_FOLDER_PREFIX))).toBe(true);
    } finally {
      await upload.dispose();
    }
    expect(uploadFolders()).toEqual([]);
    await upload.dispose(); // a second call is harmless
  });

  it("reads a body framed by the platform's own FormData encoder", async () => {
    const form = new FormData();
    form.set("kind", "estimates");
    form.set("file", new File(["a;b\n1;2\n"], "years.csv", { type: "text/csv" }));
    form.set("siteCode", "OAK");
    const upload = await receiveMultipartUpload(new Request("http://localhost/", { method: "POST", body: form }), FIELDS, LIMITS);
    expect(Object.fromEntries(upload.fields)).toEqual({ kind: "estimates", siteCode: "OAK" });
    expect(readFileSync(upload.file!.path, "utf8")).toBe("a;b\n1;2\n");
    await upload.dispose();
  });

  it("gives no file when the form has none", async () => {
    const upload = await receiveMultipartUpload(multipartRequest([{ name: "siteCode", value: "BIR" }]), FIELDS, LIMITS);
    expect(upload.file).toBeNull();
    await upload.dispose();
    expect(uploadFolders()).toEqual([]);
  });

  it("refuses a body over the limit from Content-Length before making any folder, and while streaming otherwise", async () => {
    const declared = new Request("http://localhost/", { method: "POST", headers: { "content-type": multipartType(), "content-length": "5000" }, body: "x".repeat(5000) });
    const early = await refusal(receiveMultipartUpload(declared, FIELDS, LIMITS));
    expect(early).toMatchObject({ code: "too_large", httpStatus: 413 });
    expect(early.message).toBe("the upload form is 5000 bytes; this server accepts at most 4096 bytes (set by PHENOPOOL_MAX_UPLOAD_BYTES)");
    const streamed = multipartRequest([
      { name: "siteCode", value: "BIR" },
      { name: "file", fileName: "big.csv", content: "f".repeat(10_000) },
    ]);
    const late = await refusal(receiveMultipartUpload(streamed, FIELDS, LIMITS));
    expect(late.code).toBe("too_large");
    expect(late.message).toBe("the upload form is more than 4096 bytes; this server accepts at most 4096 bytes (set by PHENOPOOL_MAX_UPLOAD_BYTES)");
    expect(uploadFolders()).toEqual([]);
  });

  it("refuses malformed framing with a clear invalid_input, leaving nothing behind", async () => {
    const file = { name: "file", fileName: "x.csv", content: "female,year\nB-1,2010\n" } as const;
    const cases: [string, Request, RegExp][] = [
      ["no boundary parameter", new Request("http://localhost/", { method: "POST", headers: { "content-type": "multipart/form-data" }, body: "--x\r\n" }), /Boundary not found/],
      ["cut off before the closing delimiter", multipartRequest([file], { closing: false }), /Unexpected end of (form|file)/],
      ["another boundary than the header's", new Request("http://localhost/", { method: "POST", headers: { "content-type": multipartType("other") }, body: bodyStream(multipartChunks([file])), duplex: "half" } as RequestInit), /Unexpected end of form/],
      [
        "a part header without its empty line",
        new Request("http://localhost/", { method: "POST", headers: { "content-type": multipartType() }, body: `--${TEST_BOUNDARY}\r\nContent-Disposition form-data\r\n--${TEST_BOUNDARY}--\r\n` }),
        /Malformed part header|Unexpected end of form/,
      ],
    ];
    for (const [what, request, reason] of cases) {
      const error = await refusal(receiveMultipartUpload(request, FIELDS, LIMITS));
      expect(error.code, what).toBe("invalid_input");
      expect(error.httpStatus, what).toBe(422);
      expect(error.message, what).toMatch(/^the form could not be read as multipart\/form-data: /);
      expect(error.message, what).toMatch(reason);
      expect(error.fieldErrors[0]!.field, what).toBe("(body)");
    }
    expect(uploadFolders()).toEqual([]);
  });

  it("refuses unknown, repeated and misplaced parts, naming the field", async () => {
    const file = { name: "file", fileName: "x.csv", content: "a\n1\n" } as const;
    const cases: [string, Parameters<typeof multipartRequest>[0], RegExp][] = [
      ["misspelt field", [file, { name: "delimeter", value: ";" }], /field 'delimeter' is not one this upload takes \(fields: file, siteCode/],
      ["repeated field", [{ name: "kind", value: "estimates" }, file, { name: "kind", value: "brood_records" }], /field 'kind' is given more than once/],
      ["second file", [file, { ...file, fileName: "y.csv" }], /field 'file' holds more than one file/],
      ["file in another field", [{ name: "siteCode", fileName: "s.csv", content: "BIR" }], /field 'siteCode' is a file, but this upload takes its file only in 'file'/],
      ["file sent as text", [{ name: "file", value: "female,year\n" }], /field 'file' holds text: send the file as a file part/],
    ];
    for (const [what, parts, message] of cases) {
      const error = await refusal(receiveMultipartUpload(multipartRequest(parts), FIELDS, LIMITS));
      expect(error.code, what).toBe("invalid_input");
      expect(error.message, what).toMatch(message);
    }
    expect(uploadFolders()).toEqual([]);
  });

  it("removes the partly written file when the client goes away mid-file", async () => {
    const chunk = new TextEncoder().encode("B-1,2010,121,8,,6,1\n".repeat(1000));
    async function* endless() {
      for (;;) yield chunk;
    }
    const request = multipartRequest([{ name: "siteCode", value: "BIR" }, { name: "file", fileName: "cut.csv", content: endless }], { failAfter: 200_000 });
    const error = await refusal(receiveMultipartUpload(request, FIELDS, LARGE));
    expect(error.code).toBe("invalid_input");
    expect(error.message).toMatch(/^the form could not be read as multipart\/form-data: /);
    expect(uploadFolders()).toEqual([]);
  });

  it("streams a 64 MiB file to disk with bounded memory", async () => {
    const FILE_BYTES = 64 * 1024 * 1024;
    const CHUNK = 64 * 1024;
    const hash = createHash("sha256");
    async function* content() {
      // Distinct lines in every chunk (a row number), generated on the fly and hashed as sent.
      for (let sent = 0, row = 0; sent < FILE_BYTES; sent += CHUNK) {
        let text = "";
        while (text.length < CHUNK) text += `${row++},2010,121,8,,6,1,streamed\n`;
        const bytes = new TextEncoder().encode(text.slice(0, CHUNK));
        hash.update(bytes);
        yield bytes;
      }
    }
    const request = multipartRequest([{ name: "kind", value: "brood_records" }, { name: "file", fileName: "large.csv", content }, { name: "siteCode", value: "BIR" }]);
    global.gc?.();
    const before = process.memoryUsage().rss;
    let peak = before;
    const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 5);
    const upload = await receiveMultipartUpload(request, FIELDS, LARGE);
    clearInterval(sampler);
    peak = Math.max(peak, process.memoryUsage().rss);
    try {
      expect(upload.file!.byteCount).toBe(FILE_BYTES);
      expect(await sha256OfFile(upload.file!.path)).toBe(hash.digest("hex"));
      expect(upload.fields.get("siteCode")).toBe("BIR");
      const riseMiB = (peak - before) / (1024 * 1024);
      console.log(`multipart receive of a 64 MiB file: resident memory rose by ${riseMiB.toFixed(1)} MiB at its peak (from ${(before / 2 ** 20).toFixed(0)} MiB)`);
      // A reader that held the body would grow by at least its 64 MiB.
      expect(riseMiB).toBeLessThan(32);
    } finally {
      await upload.dispose();
    }
    expect(existsSync(upload.file!.path)).toBe(false);
    expect(uploadFolders()).toEqual([]);
  });
});
