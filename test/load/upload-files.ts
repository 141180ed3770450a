import { createHash } from "node:crypto";
import { toCsv } from "@/lib/export/csv";
import type { BroodRecordRow } from "@/lib/ingest/schemas/brood-record-row";

/**
 * The files the load test's clients upload: a site's current brood records, optionally repeated
 * (each copy's females renamed, so every key stays unique), plus one brood whose female id names
 * the client and its upload, so no two files are alike. Every file is valid.
 */
export interface UploadFile {
  fileName: string;
  csv: string;
  /** SHA-256 of the CSV's bytes, as the server computes it. */
  sha256: string;
  rowCount: number;
  /** SHA-256 of the rows in canonical order (see rowsDigest): compared with what the database holds. */
  rowsDigest: string;
}

/** The name every load-test upload starts with, so the check afterwards can find them all. */
export const LOAD_FILE_PREFIX = "load-";

/** Each field with a heading the upload recognises without a column mapping. */
const COLUMNS = [
  ["female", "femaleId"],
  ["year", "year"],
  ["lay date", "layDateDoy"],
  ["clutch size", "clutchSize"],
  ["hatch date", "hatchDateDoy"],
  ["fledged", "fledglings"],
  ["recruits", "recruits"],
] as const;

/** One brood as a line that two equal broods share, whatever their order in a file. */
function canonicalLine(row: BroodRecordRow): string {
  return [row.year, row.femaleId, row.layDateDoy, row.clutchSize, row.hatchDateDoy ?? "", row.fledglings, row.recruits].join("\u001f");
}

/** SHA-256 of the rows' canonical lines, sorted: the same for the same set of broods. */
export function rowsDigest(rows: Iterable<BroodRecordRow>): string {
  const lines = Array.from(rows, canonicalLine).sort();
  return createHash("sha256").update(lines.join("\n")).digest("hex");
}

/**
 * The upload of `client`'s `sequence`-th file for a site whose broods are `base` (non-empty):
 * `copies` copies of them (females of copy k >= 2 get the suffix ~k) and one marker brood.
 */
export function uploadFile(siteCode: string, base: readonly BroodRecordRow[], client: number, sequence: number, copies: number): UploadFile {
  const first = base[0];
  if (!first) throw new Error(`site ${siteCode} has no brood records to vary`);
  const rows: BroodRecordRow[] = [];
  for (let copy = 1; copy <= copies; copy++) {
    for (const row of base) rows.push(copy === 1 ? row : { ...row, femaleId: `${row.femaleId}~${copy}` });
  }
  rows.push({ ...first, femaleId: `load-c${client}-u${sequence}`, hatchDateDoy: null, fledglings: 0, recruits: 0 });
  const csv = toCsv(
    COLUMNS.map(([header, field]) => ({ header, value: (row: BroodRecordRow) => row[field] })),
    rows,
  );
  return {
    fileName: `${LOAD_FILE_PREFIX}${siteCode.toLowerCase()}-c${client}-u${sequence}.csv`,
    csv,
    sha256: createHash("sha256").update(csv, "utf8").digest("hex"),
    rowCount: rows.length,
    rowsDigest: rowsDigest(rows),
  };
}
