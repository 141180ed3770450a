import { createHash } from "node:crypto";
import { createReadStream } from "node:fs";
import { basename } from "node:path";
import { FILE_COLUMN, type UploadProblem } from "./upload-problem";

/**
 * An uploaded file that can be read more than once (once to check it, once to write it), each
 * time from the start, in chunks: nothing here holds a whole large file in memory.
 */
export interface UploadSource {
  fileName: string;
  open: () => AsyncIterable<Uint8Array>;
}

/** Bytes per chunk of an in-memory upload: a few thousand rows, a few tens of milliseconds of checking. */
const MEMORY_CHUNK_BYTES = 1 << 16;

/**
 * Bytes already in memory (uploads through the web server, tests). Between chunks the reader
 * gives way to the event loop, so checking and writing a large file in the server does not hold
 * up every other request until it is done.
 */
export function uploadSourceFromBytes(fileName: string, bytes: Uint8Array | string): UploadSource {
  const data = typeof bytes === "string" ? new TextEncoder().encode(bytes) : bytes;
  return {
    fileName,
    async *open() {
      for (let start = 0; start < data.length; start += MEMORY_CHUNK_BYTES) {
        if (start > 0) await new Promise<void>((resolve) => setImmediate(resolve));
        yield data.subarray(start, start + MEMORY_CHUNK_BYTES);
      }
    },
  };
}

/** A file on disk, read in 1 MiB chunks. `fileName` (default: the path's last part) is what problems name. */
export function uploadSourceFromFile(path: string, fileName: string = basename(path)): UploadSource {
  return { fileName, open: () => createReadStream(path, { highWaterMark: 1 << 20 }) };
}

/** A problem that stops reading the file (bad encoding, too large, unreadable sheet). */
export class UploadFileError extends Error {
  constructor(
    readonly problem: UploadProblem,
    readonly tooLarge = false,
  ) {
    super(problem.reason);
    this.name = "UploadFileError";
  }
}

/** What reading the bytes through `meteredBytes` measured. Complete once the iteration has ended. */
export interface ByteMeter {
  bytes: number;
  sha256: string | null;
}

/**
 * Passes the source's bytes through, counting them and hashing them with SHA-256; throws
 * UploadFileError (tooLarge) as soon as more than `maxBytes` arrive.
 */
export async function* meteredBytes(source: UploadSource, maxBytes: number, meter: ByteMeter): AsyncGenerator<Uint8Array> {
  const hash = createHash("sha256");
  meter.bytes = 0;
  meter.sha256 = null;
  for await (const raw of source.open()) {
    const chunk = raw instanceof Uint8Array ? raw : new Uint8Array(raw as ArrayBuffer);
    meter.bytes += chunk.length;
    if (meter.bytes > maxBytes) {
      throw new UploadFileError(
        {
          file: source.fileName,
          row: 0,
          column: FILE_COLUMN,
          reason: `the file is larger than the upload limit of ${formatBytes(maxBytes)} (PHENOPOOL_MAX_UPLOAD_BYTES); split it or ask the network coordinator to raise the limit`,
        },
        true,
      );
    }
    hash.update(chunk);
    yield chunk;
  }
  meter.sha256 = hash.digest("hex");
}

export function formatBytes(bytes: number): string {
  if (bytes >= 1 << 20) return `${(bytes / (1 << 20)).toFixed(bytes % (1 << 20) === 0 ? 0 : 1)} MiB`;
  if (bytes >= 1 << 10) return `${(bytes / (1 << 10)).toFixed(bytes % (1 << 10) === 0 ? 0 : 1)} KiB`;
  return `${bytes} bytes`;
}

/** SHA-256 of a source's bytes, lower-case hex. */
export async function sha256OfSource(source: UploadSource): Promise<string> {
  const hash = createHash("sha256");
  for await (const chunk of source.open()) hash.update(chunk);
  return hash.digest("hex");
}
