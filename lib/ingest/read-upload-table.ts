import { Readable } from "node:stream";
import ExcelJS from "exceljs";
import JSZip from "jszip";
import { z } from "zod";
import { DelimitedTokenizer, detectDelimiter, type Delimiter, type QuotingIssue } from "./delimited-tokenizer";
import { FILE_COLUMN } from "./upload-problem";
import { meteredBytes, UploadFileError, type ByteMeter, type UploadSource } from "./upload-source";
import { Utf8Decoder } from "./utf8-decoder";

/** A cell as read: text from CSV/TSV; text or a number from .xlsx (dates become YYYY-MM-DD); null when empty. */
export type CellValue = string | number | null;

export interface TableRecord {
  /** 1 = the first record after the heading row (see UploadProblem for the numbering). */
  row: number;
  /** The file's line (CSV/TSV) or the sheet's row (.xlsx) where the record starts. */
  line: number;
  cells: CellValue[];
  quotingIssues: QuotingIssue[] | null;
}

export interface TableHeadings {
  /** Each heading as written (trimmed); "" for a blank heading cell. */
  headings: string[];
  line: number;
}

export const delimiterSchema = z.enum([",", ";", "\t"]);

/** How to read a file; everything not given is detected. */
export const tableReadOptionsSchema = z.object({
  /** Cell delimiter of a text file; detected from the first lines when absent. */
  delimiter: delimiterSchema.optional(),
  /** Sheet of an .xlsx workbook, by name; the first sheet when absent. */
  sheet: z.string().trim().min(1).optional(),
});
export type TableReadOptions = z.infer<typeof tableReadOptionsSchema>;

export interface TableInfo {
  format: "csv" | "xlsx";
  delimiter: Delimiter | null;
  /** Whether the delimiter was detected rather than given. */
  delimiterDetected: boolean;
  byteOrderMark: boolean;
  /** The sheet read, and every sheet of the workbook (.xlsx only). */
  sheet: string | null;
  sheets: string[];
}

export interface TableHandlers {
  onHeadings: (headings: TableHeadings) => void;
  /** Called with the records of each chunk in file order; awaited before more of the file is read. */
  onRecords: (records: TableRecord[]) => void | Promise<void>;
}

/** First bytes of a zip archive (every .xlsx) and of the old binary .xls. */
const ZIP_MAGIC = [0x50, 0x4b, 0x03, 0x04];
const OLE_MAGIC = [0xd0, 0xcf, 0x11, 0xe0];
/** Text read before the delimiter is guessed from it. */
const DETECTION_SAMPLE_CHARS = 64 * 1024;

function startsWith(bytes: Uint8Array, magic: number[]): boolean {
  return magic.every((b, i) => bytes[i] === b);
}

/**
 * Reads an uploaded table (CSV, semicolon CSV, TSV, or an .xlsx sheet) in one pass, with memory
 * bounded by the chunk size: the first non-blank record is the headings, every later non-blank
 * record goes to `onRecords`. The format is told by the file's first bytes, not its name.
 *
 * Throws UploadFileError for a file that cannot be read at all (not UTF-8, an old .xls, a broken
 * workbook, a missing sheet, more than `maxBytes`). `meter` ends with the byte count and SHA-256.
 */
export async function readUploadTable(
  source: UploadSource,
  options: TableReadOptions & { maxBytes: number },
  handlers: TableHandlers,
  meter: ByteMeter,
): Promise<TableInfo> {
  const bytes = meteredBytes(source, options.maxBytes, meter)[Symbol.asyncIterator]();
  const first = await bytes.next();
  const firstChunk = first.done ? new Uint8Array(0) : first.value;
  if (startsWith(firstChunk, OLE_MAGIC)) {
    throw new UploadFileError({
      file: source.fileName,
      row: 0,
      column: FILE_COLUMN,
      reason: "this is an old binary Excel file (.xls); save it as .xlsx or as CSV UTF-8",
    });
  }
  async function* rest(): AsyncGenerator<Uint8Array> {
    if (!first.done) yield firstChunk;
    for (let next = await bytes.next(); !next.done; next = await bytes.next()) yield next.value;
  }
  if (startsWith(firstChunk, ZIP_MAGIC)) return readWorkbook(source.fileName, rest(), options, handlers);
  return readDelimited(source.fileName, rest(), options, handlers);
}

async function readDelimited(
  fileName: string,
  chunks: AsyncIterable<Uint8Array>,
  options: TableReadOptions,
  handlers: TableHandlers,
): Promise<TableInfo> {
  const decoder = new Utf8Decoder(fileName);
  let tokenizer: DelimitedTokenizer | null = null;
  let delimiter: Delimiter | null = options.delimiter ?? null;
  let sample = "";
  let headingsSeen = false;
  let headingRecordIndex = 0;
  let recordIndex = 0;
  let batch: TableRecord[] = [];
  const onRecord = (cells: string[], line: number, issues: QuotingIssue[] | null) => {
    recordIndex += 1;
    const blank = cells.length === 1 && cells[0]!.trim() === "" && issues === null;
    if (!headingsSeen) {
      if (blank) return;
      headingsSeen = true;
      headingRecordIndex = recordIndex;
      handlers.onHeadings({ headings: cells.map((c) => c.trim()), line });
      return;
    }
    if (blank) return;
    batch.push({ row: recordIndex - headingRecordIndex, line, cells, quotingIssues: issues });
  };
  const start = (text: string) => {
    delimiter ??= detectDelimiter(text);
    tokenizer = new DelimitedTokenizer(delimiter);
    tokenizer.push(text, onRecord);
  };
  const flush = async () => {
    if (batch.length === 0) return;
    const records = batch;
    batch = [];
    await handlers.onRecords(records);
  };
  for await (const chunk of chunks) {
    const text = decoder.decode(chunk);
    if (tokenizer === null) {
      sample += text;
      if (sample.length < DETECTION_SAMPLE_CHARS) continue;
      start(sample);
      sample = "";
    } else {
      (tokenizer as DelimitedTokenizer).push(text, onRecord);
    }
    await flush();
  }
  const tail = decoder.end();
  if (tokenizer === null) start(sample + tail);
  else (tokenizer as DelimitedTokenizer).push(tail, onRecord);
  (tokenizer as unknown as DelimitedTokenizer).end(onRecord);
  await flush();
  return {
    format: "csv",
    delimiter,
    delimiterDetected: options.delimiter === undefined,
    byteOrderMark: decoder.byteOrderMark,
    sheet: null,
    sheets: [],
  };
}

function isoDate(date: Date): string {
  const iso = date.toISOString();
  return iso.endsWith("T00:00:00.000Z") ? iso.slice(0, 10) : `${iso.slice(0, 10)} ${iso.slice(11, 16)}`;
}

/** An .xlsx cell value as text or a number, whatever kind of cell it is. */
export function normaliseWorkbookCell(value: unknown): CellValue {
  if (value === null || value === undefined) return null;
  if (typeof value === "number") return value;
  if (typeof value === "string") return value;
  if (typeof value === "boolean") return value ? "TRUE" : "FALSE";
  if (value instanceof Date) return Number.isNaN(value.getTime()) ? "(invalid date)" : isoDate(value);
  if (typeof value === "object") {
    const cell = value as Record<string, unknown>;
    if ("result" in cell) return cell.result === undefined ? `=${String(cell.formula ?? cell.sharedFormula ?? "")}` : normaliseWorkbookCell(cell.result);
    if ("formula" in cell || "sharedFormula" in cell) return `=${String(cell.formula ?? cell.sharedFormula ?? "")}`;
    if (Array.isArray(cell.richText)) return cell.richText.map((part: { text?: unknown }) => String(part.text ?? "")).join("");
    if ("text" in cell) return normaliseWorkbookCell(cell.text);
    if ("error" in cell) return String(cell.error);
  }
  return String(value);
}

interface WorkbookSheet {
  name: string;
  /** The number of the sheet's part, xl/worksheets/sheetN.xml. */
  partNumber: string;
}

function xmlAttribute(tag: string, name: string): string | undefined {
  const match = new RegExp(`\\s${name}="([^"]*)"`).exec(tag);
  return match ? decodeXml(match[1]!) : undefined;
}

function decodeXml(text: string): string {
  return text.replace(/&(lt|gt|quot|apos|amp|#\d+|#x[0-9a-fA-F]+);/g, (_, entity: string) => {
    if (entity === "lt") return "<";
    if (entity === "gt") return ">";
    if (entity === "quot") return '"';
    if (entity === "apos") return "'";
    if (entity === "amp") return "&";
    return String.fromCodePoint(entity.startsWith("#x") ? parseInt(entity.slice(2), 16) : parseInt(entity.slice(1), 10));
  });
}

/** The workbook's sheets in tab order, from xl/workbook.xml and its relationships. */
async function listSheets(zip: JSZip): Promise<WorkbookSheet[]> {
  const workbookXml = await zip.file("xl/workbook.xml")?.async("string");
  const relsXml = await zip.file("xl/_rels/workbook.xml.rels")?.async("string");
  if (workbookXml === undefined || relsXml === undefined) throw new Error("no xl/workbook.xml: not a spreadsheet workbook");
  const targets = new Map<string, string>();
  for (const tag of relsXml.match(/<(\w+:)?Relationship\s[^>]*>/g) ?? []) {
    const id = xmlAttribute(tag, "Id");
    const target = xmlAttribute(tag, "Target");
    if (id && target) targets.set(id, target);
  }
  const sheets: WorkbookSheet[] = [];
  for (const tag of workbookXml.match(/<(\w+:)?sheet\s[^>]*>/g) ?? []) {
    const name = xmlAttribute(tag, "name");
    const relation = xmlAttribute(tag, "r:id") ?? xmlAttribute(tag, "[\\w]+:id");
    const part = relation ? /worksheets\/sheet(\d+)\.xml$/.exec(targets.get(relation) ?? "") : null;
    if (name !== undefined && part) sheets.push({ name, partNumber: part[1]! });
  }
  return sheets;
}

async function readWorkbook(
  fileName: string,
  chunks: AsyncIterable<Uint8Array>,
  options: TableReadOptions,
  handlers: TableHandlers,
): Promise<TableInfo> {
  const parts: Uint8Array[] = [];
  for await (const chunk of chunks) parts.push(chunk);
  // The zip's directory is at its end, so a workbook is held whole (within the size limit); its
  // sheet is then read row by row.
  const bytes = Buffer.concat(parts);
  parts.length = 0;
  const problem = (reason: string) => new UploadFileError({ file: fileName, row: 0, column: FILE_COLUMN, reason });
  const failure = (error: unknown) => problem(`the workbook cannot be read as .xlsx (${error instanceof Error ? error.message : String(error)})`);
  let sheets: WorkbookSheet[];
  try {
    sheets = await listSheets(await JSZip.loadAsync(bytes));
  } catch (error) {
    throw failure(error);
  }
  if (sheets.length === 0) throw problem("the workbook has no sheets");
  const wanted = options.sheet?.trim().toLowerCase();
  const chosen = wanted === undefined ? sheets[0]! : sheets.find((s) => s.name.trim().toLowerCase() === wanted);
  if (!chosen) {
    throw problem(`the workbook has no sheet named "${options.sheet}"; its sheets are ${sheets.map((s) => `"${s.name}"`).join(", ")}`);
  }
  try {
    const reader = new ExcelJS.stream.xlsx.WorkbookReader(Readable.from([bytes]), {
      sharedStrings: "cache",
      styles: "cache",
      hyperlinks: "ignore",
      worksheets: "emit",
      entries: "emit",
    });
    // The reader announces each worksheet's part just before it hands the worksheet over.
    let partNumber = "";
    (reader as unknown as NodeJS.EventEmitter).on("entry", (entry: { type?: string; id?: unknown }) => {
      if (entry.type === "worksheet") partNumber = String(entry.id);
    });
    for await (const worksheet of reader) {
      const take = partNumber === chosen.partNumber;
      let headingLine = 0;
      let batch: TableRecord[] = [];
      for await (const row of worksheet) {
        if (!take) continue;
        const values = Array.isArray(row.values) ? row.values : [];
        // exceljs numbers columns from 1: values[0] is always empty.
        const cells: CellValue[] = [];
        for (let c = 1; c < values.length; c++) cells.push(normaliseWorkbookCell(values[c]));
        const blank = cells.every((v) => v === null || (typeof v === "string" && v.trim() === ""));
        if (blank) continue;
        if (headingLine === 0) {
          headingLine = row.number;
          handlers.onHeadings({ headings: cells.map((v) => (v === null ? "" : String(v).trim())), line: row.number });
          continue;
        }
        batch.push({ row: row.number - headingLine, line: row.number, cells, quotingIssues: null });
        if (batch.length >= 5_000) {
          await handlers.onRecords(batch);
          batch = [];
        }
      }
      if (take && batch.length) await handlers.onRecords(batch);
    }
  } catch (error) {
    if (error instanceof UploadFileError) throw error;
    throw failure(error);
  }
  return { format: "xlsx", delimiter: null, delimiterDetected: false, byteOrderMark: false, sheet: chosen.name, sheets: sheets.map((s) => s.name) };
}
