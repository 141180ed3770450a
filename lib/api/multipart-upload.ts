import busboy from "busboy";
import { createWriteStream } from "node:fs";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { Readable, Transform } from "node:stream";
import { pipeline } from "node:stream/promises";
import type { ReadableStream as NodeReadableStream } from "node:stream/web";
import type { z } from "zod";
import { AppError } from "../errors/app-error";
import { bodyLimitsFromEnv, bodyTooLarge, FORM_OVERHEAD_BYTES, type BodyLimits } from "./request-input";

/**
 * A multipart/form-data upload (RFC 7578) received without holding it in memory: the file part is
 * streamed to a file in a private temporary folder (mkdtemp under os.tmpdir(), mode 0700) while
 * every byte of the body is counted against the upload form's limit; the text fields are kept.
 * The parsing of the framing is busboy's.
 */

/** The parts a route takes: one file field and the names of its text fields. */
export interface MultipartFields {
  file: string;
  text: readonly string[];
}

export interface ReceivedFile {
  /** The file's name as the client gave it (without any folder); "" when it gave none. */
  fileName: string;
  /** Where its bytes are, inside the upload's temporary folder. */
  path: string;
  byteCount: number;
}

export interface MultipartUpload {
  /** The text fields, each given once. */
  fields: ReadonlyMap<string, string>;
  /** The file part, or null when the form had none. */
  file: ReceivedFile | null;
  /** Removes the temporary folder with the file; safe to call more than once. */
  dispose: () => Promise<void>;
}

/** The prefix of each upload's temporary folder (the rest is random). */
export const UPLOAD_FOLDER_PREFIX = "phenopool-upload-";

/** The parts of a route's multipart schema: the field whose schema has format "binary" is the file. */
export function multipartFieldsOf(schema: z.ZodObject): MultipartFields {
  const names = Object.keys(schema.shape);
  const files = names.filter((name) => (schema.shape[name] as z.ZodType).meta()?.format === "binary");
  if (files.length !== 1) throw new Error(`a multipart schema needs exactly one binary field, not ${files.length}`);
  return { file: files[0]!, text: names.filter((name) => name !== files[0]) };
}

function malformed(reason: string): AppError {
  return new AppError("invalid_input", `the form could not be read as multipart/form-data: ${reason}`, [{ field: "(body)", message: reason }]);
}

function badPart(field: string, message: string): AppError {
  return new AppError("invalid_input", `the form's field '${field}' ${message}`, [{ field, message }]);
}

/** Errors of the temporary folder itself (full, read-only, forbidden), told apart from a bad form. */
const TEMPORARY_STORAGE_CODES = new Set(["ENOSPC", "EDQUOT", "EROFS", "EACCES", "EPERM", "EMFILE", "ENFILE"]);

function temporaryStorageError(error: unknown, folder: string): AppError | null {
  const code = (error as { code?: unknown } | null)?.code;
  if (typeof code !== "string" || !TEMPORARY_STORAGE_CODES.has(code)) return null;
  return new AppError(
    "storage_unavailable",
    `the server could not keep the uploaded file in its temporary folder ${folder} (${code}); nothing was written. Free space there (or set TMPDIR to a folder with room), then try again.`,
  );
}

/**
 * Reads the body of `request` as multipart/form-data with the parts `expected` names. The file is
 * written to a new temporary folder; the caller must call `dispose` when done with it. On any
 * refusal the folder is removed before this throws.
 *
 * Throws AppError too_large (413) when the body is larger than `limits.formBytes` (from
 * Content-Length before anything is read, or as soon as the streamed bytes pass it), naming the
 * variable that sets the limit; invalid_input for a body that is not well-formed multipart (no
 * boundary, cut off, a malformed part header), an unknown or repeated field, a second file, a file
 * sent as text, or a text field over FORM_OVERHEAD_BYTES; storage_unavailable when the temporary
 * folder cannot take the file.
 */
export async function receiveMultipartUpload(request: Request, expected: MultipartFields, limits: BodyLimits = bodyLimitsFromEnv()): Promise<MultipartUpload> {
  const declared = Number(request.headers.get("content-length") ?? Number.NaN);
  if (declared > limits.formBytes) throw bodyTooLarge("upload form", `${declared} bytes`, limits.formBytes, limits.formVariable);
  const body = request.body;
  if (!body) throw malformed("the request has no body");
  let parser: busboy.Busboy;
  try {
    // Filenames as browsers and fetch send them: UTF-8 bytes in the quoted parameter (RFC 7578 section 4.2).
    parser = busboy({ headers: { "content-type": request.headers.get("content-type") ?? "" }, defParamCharset: "utf8", limits: { fieldSize: FORM_OVERHEAD_BYTES } });
  } catch (error) {
    await body.cancel().catch(() => undefined);
    throw malformed((error as Error).message);
  }
  const folder = await mkdtemp(join(tmpdir(), UPLOAD_FOLDER_PREFIX));
  const dispose = () => rm(folder, { recursive: true, force: true });
  try {
    return { ...(await receiveParts(body, parser, folder, expected, limits)), dispose };
  } catch (error) {
    await dispose();
    throw error;
  }
}

async function receiveParts(
  body: ReadableStream<Uint8Array>,
  parser: busboy.Busboy,
  folder: string,
  expected: MultipartFields,
  limits: BodyLimits,
): Promise<Omit<MultipartUpload, "dispose">> {
  const fields = new Map<string, string>();
  let file: ReceivedFile | null = null;
  let fileWritten: Promise<void> = Promise.resolve();
  const failures: unknown[] = [];
  const stop = new AbortController();
  const fail = (error: unknown) => {
    failures.push(error);
    stop.abort(error);
  };
  const known = [expected.file, ...expected.text].join(", ");

  parser.on("field", (name, value, info) => {
    if (name === expected.file) return fail(badPart(name, "holds text: send the file as a file part, with a filename"));
    if (!expected.text.includes(name)) return fail(badPart(name, `is not one this upload takes (fields: ${known})`));
    if (info.valueTruncated) return fail(badPart(name, `is longer than ${FORM_OVERHEAD_BYTES} bytes`));
    if (fields.has(name)) return fail(badPart(name, "is given more than once: give it once"));
    fields.set(name, value);
  });
  parser.on("file", (name, stream, info) => {
    if (name !== expected.file || file) {
      // Discarded: its error, when the refusal below ends the parse, is that refusal's echo.
      stream.on("error", () => undefined).resume();
      return fail(name !== expected.file ? badPart(name, `is a file, but this upload takes its file only in '${expected.file}' (fields: ${known})`) : badPart(name, "holds more than one file: send one file per upload"));
    }
    const received: ReceivedFile = { fileName: info.filename ?? "", path: join(folder, "upload"), byteCount: 0 };
    file = received;
    const sink = createWriteStream(received.path, { flags: "wx", mode: 0o600 });
    fileWritten = pipeline(stream, sink).then(
      () => {
        received.byteCount = sink.bytesWritten;
      },
      (error: unknown) => fail(temporaryStorageError(error, folder) ?? error),
    );
  });

  let total = 0;
  const meter = new Transform({
    transform(chunk: Buffer, _encoding, done) {
      total += chunk.length;
      if (total > limits.formBytes) done(bodyTooLarge("upload form", `more than ${limits.formBytes} bytes`, limits.formBytes, limits.formVariable));
      else done(null, chunk);
    },
  });

  try {
    await pipeline(Readable.fromWeb(body as NodeReadableStream<Uint8Array>), meter, parser, { signal: stop.signal });
  } catch (error) {
    failures.push(error);
  }
  await fileWritten;
  if (failures.length === 0) return { fields, file };
  // The first refusal of our own says best what was wrong; the stream errors that follow it are its echoes.
  const own = failures.find((f) => f instanceof AppError);
  if (own) throw own;
  throw malformed(failures.map((f) => (f as Error).message ?? String(f)).find((m) => m && !/aborted/i.test(m)) ?? "the body ended early");
}
