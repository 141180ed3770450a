import { proposeMapping, resolveMapping, type ColumnMapping, type ProposedMapping, type ResolvedColumn } from "../ingest/column-mapping";
import type { DateConventionName } from "../ingest/date-convention";
import { readUploadTable, type TableInfo, type TableReadOptions, type TableRecord } from "../ingest/read-upload-table";
import { RecordReader, type RowReadContext } from "../ingest/record-reader";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";
import { KIND_RULES, type RowsOfKind } from "../ingest/submission-kind-rules";
import { readBroodRecord } from "../ingest/upload-kinds/brood-records";
import { readEstimate } from "../ingest/upload-kinds/estimates";
import { FrassSeriesCollector, isFrassSeries, readFrassSample, readSiteYear, type FoodPeakFit } from "../ingest/upload-kinds/site-year-covariates";
import { DuplicateKeyTracker } from "../ingest/validate-rows";
import { FILE_COLUMN, HEADINGS_COLUMN, ProblemCollector, type ProblemTotals, type UploadProblem } from "../ingest/upload-problem";
import { UploadFileError, type ByteMeter, type UploadSource } from "../ingest/upload-source";
import type { UnheadedColumn } from "../ingest/unread-columns";
import { fitFoodPeakFromFrass } from "./fit-food-peak";

export interface UploadLimits {
  maxBytes: number;
  maxRows: number;
  /** Problems listed in full; beyond this they are only counted. */
  maxListedProblems: number;
}

export interface UploadScanSettings {
  kind: SubmissionKindName;
  siteCode: string;
  convention: DateConventionName;
  networkSiteCodes: ReadonlySet<string>;
  decimalComma: boolean;
  table: TableReadOptions;
  /** Field -> heading given with this upload (overrides the proposal). */
  mapping: ColumnMapping | null;
  /** The site's remembered mapping for this kind. */
  remembered: ColumnMapping | null;
  limits: UploadLimits;
  /**
   * Skip looking for repeated keys: the file was read before and had none, and a change of the
   * bytes since is caught by its SHA-256 (it saves a key per row on the second reading).
   */
  duplicatesAlreadyExcluded?: boolean;
}

export interface UploadScan {
  fileName: string;
  table: TableInfo | null;
  headings: string[];
  /** How the headings were matched to fields (null when the file has no headings). */
  proposal: ProposedMapping | null;
  /** Columns with an empty heading, with how many rows hold a value there (those values are not read). */
  unheadedColumns: UnheadedColumn[];
  /** Data records read (blank lines not counted). */
  recordCount: number;
  /** Rows that passed every check (site-years fitted from a frass series count once per year). */
  validRowCount: number;
  problems: UploadProblem[];
  totals: ProblemTotals;
  tooLarge: boolean;
  byteCount: number;
  sha256: string | null;
}

/** Receives checked rows in file order, with their data-row numbers; awaited before reading on. */
export type RowSink<K extends SubmissionKindName> = (rows: RowsOfKind[K][], rowNumbers: number[]) => void | Promise<void>;

type RowReaderFn = (reader: RecordReader) => unknown;

/**
 * Reads an upload once from start to end and checks every row: the headings against the mapping,
 * each cell against its field, each row against its kind's schema, natural keys against earlier
 * rows. Checked rows go to `sink` as they come (a frass-fall series once per year at the end);
 * problems are collected, listed up to the limit and counted in full. Memory stays bounded by the
 * chunk size plus one key per row (to find duplicates).
 *
 * Never throws for anything wrong with the file: that is what `problems` is for (a file that
 * cannot be read at all gives one problem, `tooLarge` tells a size limit). It rethrows what
 * `sink` throws.
 */
export async function scanUpload<K extends SubmissionKindName>(source: UploadSource, settings: UploadScanSettings & { kind: K }, sink?: RowSink<K>): Promise<UploadScan> {
  const file = source.fileName;
  const collector = new ProblemCollector(settings.limits.maxListedProblems);
  const meter: ByteMeter = { bytes: 0, sha256: null };
  const rules = KIND_RULES[settings.kind];
  const duplicates = new DuplicateKeyTracker<unknown>(
    rules.keyOf as (row: unknown) => string,
    rules.keyParts as ((row: unknown) => readonly [string | number, string]) | undefined,
  );
  const context: RowReadContext = {
    file,
    decimalComma: settings.decimalComma,
    convention: settings.convention,
    siteCode: settings.siteCode,
    networkSiteCodes: settings.networkSiteCodes,
  };
  let headings: string[] = [];
  let headingLine = 0;
  let proposal: ProposedMapping | null = null;
  let columns: Map<string, ResolvedColumn> | null = null;
  let readRow: RowReaderFn | null = null;
  let frass: FrassSeriesCollector | null = null;
  let recordCount = 0;
  let validRowCount = 0;
  let tooLarge = false;
  let table: TableInfo | null = null;
  let headingsSeen = false;
  let unheadedColumns: UnheadedColumn[] = [];
  const rowProblems: UploadProblem[] = [];

  const onHeadings = ({ headings: found, line }: { headings: string[]; line: number }) => {
    headingsSeen = true;
    headings = found;
    headingLine = line;
    unheadedColumns = found.flatMap((h, i) => (h === "" ? [{ column: i + 1, rowsWithValues: 0 }] : []));
    proposal = proposeMapping(settings.kind, found, settings.remembered, settings.mapping);
    const resolved = resolveMapping(settings.kind, found, proposal.mapping, { file, line });
    for (const problem of resolved.problems) collector.add(problem);
    if (resolved.problems.length) return;
    columns = resolved.columns;
    if (settings.kind === "brood_records") readRow = readBroodRecord;
    else if (settings.kind === "estimates") readRow = readEstimate;
    else if (isFrassSeries(columns.keys())) {
      const heading = (field: string) => columns!.get(field)?.heading ?? `(${field})`;
      frass = new FrassSeriesCollector(file, { frass: heading("frassMass"), temperature: heading("meanSpringTempC"), broodCount: heading("broodCount") });
      readRow = readFrassSample;
    } else readRow = readSiteYear;
  };

  const checkShape = (record: TableRecord): boolean => {
    const base = { file, row: record.row, line: record.line };
    let ok = true;
    for (const issue of record.quotingIssues ?? []) {
      ok = false;
      const heading = headings[issue.cellIndex] || `(cell ${issue.cellIndex + 1})`;
      collector.add({
        ...base,
        line: issue.line,
        column: heading,
        reason:
          issue.kind === "unclosed_quote"
            ? `a quoted cell opened on line ${issue.line} is never closed: the rest of the file was read into it`
            : "text follows the closing quote of a quoted cell: quote the whole cell and double any quote inside it",
      });
    }
    if (record.cells.length > headings.length) {
      const extra = record.cells.slice(headings.length).findIndex((c) => c !== null && String(c).trim() !== "");
      if (extra !== -1) {
        ok = false;
        const index = headings.length + extra;
        collector.add({
          ...base,
          column: `(cell ${index + 1})`,
          value: String(record.cells[index]),
          reason: `the row has ${record.cells.length} cells but there are ${headings.length} headings: is a delimiter or a quote missing?`,
        });
      }
    }
    if (columns && record.cells.length < headings.length) {
      const missing = [...columns.values()].filter((c) => c.index >= record.cells.length).sort((a, b) => a.index - b.index);
      if (missing.length) {
        ok = false;
        collector.add({
          ...base,
          column: missing[0]!.heading,
          field: missing[0]!.field,
          reason: `the row has ${record.cells.length} cells but there are ${headings.length} headings: no cell for ${missing.map((c) => `"${c.heading}"`).join(", ")}`,
        });
      }
    }
    return ok;
  };

  const pending: { rows: unknown[]; rowNumbers: number[] } = { rows: [], rowNumbers: [] };
  const onRecords = async (records: TableRecord[]) => {
    for (const record of records) {
      recordCount += 1;
      if (recordCount > settings.limits.maxRows) {
        throw new UploadFileError(
          {
            file,
            row: record.row,
            line: record.line,
            column: FILE_COLUMN,
            reason: `the file has more than ${settings.limits.maxRows.toLocaleString("en")} data rows, the upload limit (PHENOPOOL_MAX_UPLOAD_ROWS); split it`,
          },
          true,
        );
      }
      // A value under an empty heading is not read by any field: count it, so the user is told.
      for (const unheaded of unheadedColumns) {
        const cell = record.cells[unheaded.column - 1];
        if (cell !== null && cell !== undefined && String(cell).trim() !== "") unheaded.rowsWithValues += 1;
      }
      if (!checkShape(record) || !readRow || !columns) continue;
      const reader = new RecordReader(record, columns, context, rowProblems);
      const row = readRow(reader);
      for (const problem of rowProblems) collector.add(problem);
      rowProblems.length = 0;
      if (row === null) continue;
      if (frass) {
        frass.add(row as never, record.row, record.line, rowProblems);
        for (const problem of rowProblems) collector.add(problem);
        rowProblems.length = 0;
        continue;
      }
      const first = settings.duplicatesAlreadyExcluded ? null : duplicates.seen(row, record.row);
      if (first !== null) {
        const keyColumn = columns.get(rules.duplicateField);
        const value = keyColumn ? record.cells[keyColumn.index] : undefined;
        collector.add({
          file,
          row: record.row,
          line: record.line,
          column: keyColumn?.heading ?? `(${rules.duplicateField})`,
          field: rules.duplicateField,
          ...(value !== undefined && value !== null ? { value: String(value) } : {}),
          reason: rules.describeDuplicate(row as never, first),
        });
        continue;
      }
      validRowCount += 1;
      pending.rows.push(row);
      pending.rowNumbers.push(record.row);
    }
    if (sink && pending.rows.length) {
      const batch = { rows: pending.rows, rowNumbers: pending.rowNumbers };
      pending.rows = [];
      pending.rowNumbers = [];
      await sink(batch.rows as RowsOfKind[K][], batch.rowNumbers);
    } else {
      pending.rows.length = 0;
      pending.rowNumbers.length = 0;
    }
  };

  let unreadable = false;
  try {
    table = await readUploadTable(source, { ...settings.table, maxBytes: settings.limits.maxBytes }, { onHeadings, onRecords }, meter);
  } catch (error) {
    if (!(error instanceof UploadFileError)) throw error;
    collector.add(error.problem);
    tooLarge = error.tooLarge;
    unreadable = true;
  }
  if (!unreadable && !headingsSeen) {
    collector.add({ file, row: 0, line: 1, column: FILE_COLUMN, reason: "the file is empty: it has no headings and no rows" });
  } else if (!unreadable && recordCount === 0 && columns) {
    collector.add({ file, row: 0, line: headingLine, column: HEADINGS_COLUMN, reason: "the file has headings but no data rows" });
  }
  if (frass && !unreadable) {
    const fitted = (frass as FrassSeriesCollector).finish(fitFoodPeakWith, rowProblems);
    for (const problem of rowProblems) collector.add(problem);
    rowProblems.length = 0;
    validRowCount = fitted.rows.length;
    if (sink && fitted.rows.length) await sink(fitted.rows as RowsOfKind[K][], fitted.rowNumbers);
  }
  return {
    fileName: file,
    table,
    headings,
    proposal,
    unheadedColumns,
    recordCount,
    validRowCount,
    problems: collector.listed,
    totals: collector.totals(),
    tooLarge,
    byteCount: meter.bytes,
    sha256: meter.sha256,
  };
}

function fitFoodPeakWith(dates: number[], frass: number[]): FoodPeakFit {
  return fitFoodPeakFromFrass(dates, frass);
}
