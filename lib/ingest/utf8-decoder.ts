import { FILE_COLUMN } from "./upload-problem";
import { UploadFileError } from "./upload-source";

/**
 * Decodes an uploaded text file as UTF-8, chunk by chunk, with or without a byte-order mark.
 * Anything that is not UTF-8 (a file saved as Latin-1 or Windows-1252, UTF-16, a binary file)
 * is refused with the line and byte where decoding failed and what to do about it: guessing
 * another encoding would silently change names and codes.
 */
export class Utf8Decoder {
  private readonly decoder = new TextDecoder("utf-8", { fatal: true, ignoreBOM: false });
  private started = false;
  private bytesBefore = 0;
  private linesBefore = 1;
  private hadBom = false;

  constructor(private readonly fileName: string) {}

  /** Whether the file began with a UTF-8 byte-order mark (it is dropped from the text). */
  get byteOrderMark(): boolean {
    return this.hadBom;
  }

  decode(chunk: Uint8Array): string {
    if (!this.started && chunk.length > 0) {
      this.started = true;
      this.checkStart(chunk);
    }
    const zero = chunk.indexOf(0);
    if (zero !== -1) this.fail(chunk, zero, "the file contains NUL bytes: it is probably UTF-16 or not a text file; save it as CSV UTF-8");
    let text: string;
    try {
      text = this.decoder.decode(chunk, { stream: true });
    } catch {
      const at = firstInvalidUtf8(chunk);
      this.fail(chunk, at, `byte 0x${(chunk[at] ?? 0).toString(16).toUpperCase().padStart(2, "0")} is not UTF-8: the file seems saved in another encoding (e.g. Latin-1 or Windows-1252); save it as CSV UTF-8`);
    }
    this.bytesBefore += chunk.length;
    this.linesBefore += countLf(chunk, chunk.length);
    return text;
  }

  end(): string {
    try {
      return this.decoder.decode();
    } catch {
      throw new UploadFileError({
        file: this.fileName,
        row: 0,
        line: this.linesBefore,
        column: FILE_COLUMN,
        reason: "the file ends in the middle of a UTF-8 character: it is cut short or not UTF-8",
      });
    }
  }

  private checkStart(chunk: Uint8Array): void {
    const [b0, b1, b2] = chunk;
    if ((b0 === 0xff && b1 === 0xfe) || (b0 === 0xfe && b1 === 0xff)) {
      this.fail(chunk, 0, "the file is UTF-16 (it starts with a UTF-16 byte-order mark); save it as CSV UTF-8");
    }
    this.hadBom = b0 === 0xef && b1 === 0xbb && b2 === 0xbf;
  }

  private fail(chunk: Uint8Array, at: number, reason: string): never {
    const line = this.linesBefore + countLf(chunk, at);
    throw new UploadFileError({ file: this.fileName, row: 0, line, column: FILE_COLUMN, reason: `line ${line}, byte ${this.bytesBefore + at + 1}: ${reason}` });
  }
}

function countLf(bytes: Uint8Array, end: number): number {
  let count = 0;
  for (let i = bytes.indexOf(10); i !== -1 && i < end; i = bytes.indexOf(10, i + 1)) count += 1;
  return count;
}

/** Index of the first byte that does not fit UTF-8 (bytes continuing a character from an earlier chunk are skipped). */
export function firstInvalidUtf8(bytes: Uint8Array): number {
  let i = 0;
  while (i < bytes.length && i < 3 && (bytes[i]! & 0xc0) === 0x80) i += 1;
  while (i < bytes.length) {
    const b = bytes[i]!;
    let need: number;
    if (b < 0x80) need = 0;
    else if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b >= 0xe0 && b <= 0xef) need = 2;
    else if (b >= 0xf0 && b <= 0xf4) need = 3;
    else return i;
    if (i + need >= bytes.length) return i;
    for (let k = 1; k <= need; k++) if ((bytes[i + k]! & 0xc0) !== 0x80) return i;
    // Overlong three-byte forms and UTF-16 surrogates are not UTF-8.
    if (b === 0xe0 && bytes[i + 1]! < 0xa0) return i;
    if (b === 0xed && bytes[i + 1]! > 0x9f) return i;
    if (b === 0xf0 && bytes[i + 1]! < 0x90) return i;
    if (b === 0xf4 && bytes[i + 1]! > 0x8f) return i;
    i += need + 1;
  }
  return Math.max(0, bytes.length - 1);
}
