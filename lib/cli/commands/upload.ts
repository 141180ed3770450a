import { existsSync, statSync, writeFileSync } from "node:fs";
import type { CliCommand, CliIo } from "../command";
import type { Actor } from "../../auth/actor";
import { getDb } from "../../db/client";
import { AppError } from "../../errors/app-error";
import type { ColumnMapping } from "../../ingest/column-mapping";
import { submissionKindSchema } from "../../ingest/schemas/vocabulary";
import { describeProblem, problemsToCsv } from "../../ingest/upload-problem";
import { formatBytes, uploadSourceFromFile } from "../../ingest/upload-source";
import { JOB_HANDLERS } from "../../jobs/job-handlers";
import { getJob } from "../../jobs/job-queue";
import { runNextJob } from "../../jobs/job-runner";
import { acceptUpload } from "../../submissions/accept-upload";
import { previewUpload, type UploadPreview } from "../../submissions/preview-upload";
import type { SubmissionDiff } from "../../submissions/submission-diff";
import type { UploadRequest } from "../../submissions/upload-request";

/** Who an upload from the command line is recorded as: the operator of the server's shell. */
export const COMMAND_LINE_ACTOR: Actor = { kind: "user", userId: null, role: "coordinator", label: "command line", siteIds: [], via: "none" };

/** Problems printed on the terminal; the rest are counted (and all listed with --report). */
const PRINTED_PROBLEMS = 50;

interface UploadArgs {
  file: string;
  request: UploadRequest;
  dryRun: boolean;
  report: string | null;
}

function usageError(message: string, field: string): AppError {
  return new AppError("invalid_input", `${message} (see: help upload)`, [{ field, message }]);
}

function parseArgs(args: string[]): UploadArgs {
  let file: string | null = null;
  let site: string | null = null;
  let kind: string | null = null;
  let sheet: string | undefined;
  let delimiter: "," | ";" | "\t" | undefined;
  let decimalComma = false;
  let dryRun = false;
  let report: string | null = null;
  const mapping: ColumnMapping = {};
  for (let i = 0; i < args.length; i++) {
    const arg = args[i]!;
    const value = () => {
      const next = args[++i];
      if (next === undefined) throw usageError(`${arg} needs a value`, arg);
      return next;
    };
    if (arg === "--site") site = value();
    else if (arg === "--kind") kind = value();
    else if (arg === "--sheet") sheet = value();
    else if (arg === "--delimiter") {
      const given = value();
      const named: Record<string, "," | ";" | "\t"> = { ",": ",", comma: ",", ";": ";", semicolon: ";", tab: "\t", "\t": "\t" };
      const chosen = named[given];
      if (!chosen) throw usageError(`--delimiter must be , ; or tab, not "${given}"`, "--delimiter");
      delimiter = chosen;
    } else if (arg === "--decimal-comma") decimalComma = true;
    else if (arg === "--dry-run") dryRun = true;
    else if (arg === "--report") report = value();
    else if (arg === "--map") {
      const pair = value();
      const at = pair.indexOf("=");
      if (at < 1 || at === pair.length - 1) throw usageError(`--map takes FIELD=HEADING, not "${pair}"`, "--map");
      mapping[pair.slice(0, at).trim()] = pair.slice(at + 1).trim();
    } else if (arg.startsWith("--")) throw usageError(`unknown option ${arg}`, arg);
    else if (file === null) file = arg;
    else throw usageError(`one file at a time (also given: ${arg})`, "FILE");
  }
  if (!file) throw usageError("name the file to upload", "FILE");
  if (!site) throw usageError("say which site the file is for: --site CODE", "--site");
  const parsedKind = submissionKindSchema.safeParse(kind);
  if (!parsedKind.success) throw usageError(`--kind must be brood_records, site_year_covariates or estimates${kind ? `, not "${kind}"` : ""}`, "--kind");
  if (!existsSync(file) || !statSync(file).isFile()) throw new AppError("invalid_input", `cannot read ${file}: no such file`, [{ field: "FILE", message: "no such file", value: file }]);
  return {
    file,
    dryRun,
    report,
    request: {
      siteCode: site,
      kind: parsedKind.data,
      decimalComma,
      ...(sheet ? { sheet } : {}),
      ...(delimiter ? { delimiter } : {}),
      ...(Object.keys(mapping).length ? { mapping } : {}),
    },
  };
}

function formatValue(value: unknown): string {
  return value === null || value === undefined ? "empty" : String(value);
}

export function describeDiff(diff: SubmissionDiff): string[] {
  const against = diff.againstSubmissionId === null ? "no current submission" : `current submission ${diff.againstSubmissionId}`;
  const lines = [`Compared with ${against}: ${diff.added} added, ${diff.changed} changed, ${diff.removed} removed, ${diff.unchanged} unchanged.`];
  for (const example of diff.examples.added) lines.push(`  + ${example.key}`);
  for (const example of diff.examples.changed) {
    const changes = (example.changes ?? []).map((c) => `${c.field} ${formatValue(c.from)} -> ${formatValue(c.to)}`).join(", ");
    lines.push(`  ~ ${example.key}: ${changes}`);
  }
  for (const example of diff.examples.removed) lines.push(`  - ${example.key}`);
  return lines;
}

function printPreview(preview: UploadPreview, io: CliIo): void {
  const table = preview.table;
  const format = !table
    ? "unreadable"
    : table.format === "xlsx"
      ? `.xlsx, sheet "${table.sheet}" (sheets: ${table.sheets.join(", ")})`
      : `delimited text, ${table.delimiter === "\t" ? "tab" : `"${table.delimiter}"`}${table.delimiterDetected ? " (detected)" : ""}${table.byteOrderMark ? ", UTF-8 with BOM" : ", UTF-8"}`;
  io.stdout(`${preview.fileName}: ${formatBytes(preview.byteCount)}, ${format}; site ${preview.siteCode}, ${preview.kind}, day numbers counted from ${preview.dateConvention === "apr1" ? "1 April" : "1 January"}\n`);
  if (preview.sha256) io.stdout(`SHA-256 ${preview.sha256}\n`);
  if (preview.mapping) {
    const used = Object.entries(preview.mapping.mapping).map(([field, heading]) => `${field} <- "${heading}" (${preview.mapping!.sources[field]})`);
    io.stdout(`Columns: ${used.join(", ") || "none mapped"}\n`);
  }
  // Columns no field reads, named or without a heading: their values would not be stored.
  for (const w of preview.warnings) io.stdout(`Note: ${w.message}\n`);
  io.stdout(`${preview.recordCount} data rows read, ${preview.rowCount} passed every check.\n`);
  for (const same of preview.sameBytes) {
    io.stdout(`The same bytes were uploaded before as submission ${same.submissionId} (${same.status}, ${same.submittedAt.toISOString().slice(0, 10)}).\n`);
  }
}

function printProblems(preview: UploadPreview, io: CliIo, report: string | null): void {
  const { totals } = preview;
  io.stderr(
    `${preview.fileName}: ${totals.problems} problem${totals.problems === 1 ? "" : "s"}${totals.rowsWithProblems ? ` in ${totals.rowsWithProblems} rows` : ""}; nothing was written. Rows count from 1 = the first row after the headings.\n`,
  );
  for (const problem of preview.problems.slice(0, PRINTED_PROBLEMS)) io.stderr(`  ${describeProblem(problem)}\n`);
  if (totals.problems > PRINTED_PROBLEMS) {
    const byColumn = totals.byColumn.map((c) => `${c.column} ${c.count}`).join(", ");
    io.stderr(`  ... and ${totals.problems - PRINTED_PROBLEMS} more (by column: ${byColumn})${report ? "" : "; --report FILE.csv lists them"}\n`);
  }
}

export const uploadCommand: CliCommand = {
  name: "upload",
  summary: "Check an uploaded file (CSV, TSV or .xlsx) and accept it as a site's new submission, whole or not at all.",
  usage: [
    "upload FILE --site CODE --kind brood_records|site_year_covariates|estimates",
    "       [--sheet NAME] [--delimiter ,|;|tab] [--decimal-comma] [--map FIELD=HEADING ...] [--dry-run] [--report PROBLEMS.csv]",
    "",
    "Reads FILE (UTF-8 text with or without BOM, delimiter detected unless given; or the first or named",
    "sheet of an .xlsx workbook), maps its headings to PhenoPool's fields (given with --map, else the",
    "site's remembered mapping, else by name), and checks every row. Problems are printed as",
    "'file, row N (line L), column \"heading\", value \"cell\": reason', where row 1 is the first row",
    "after the headings and line is the file's own line or sheet row; --report writes them all as CSV.",
    "",
    "Without problems it prints what would change (rows added, changed, removed against the site's",
    "current submission of the kind) and, unless --dry-run, writes the file as the new current",
    "submission in one transaction. Brood records then have the site's estimates recomputed.",
    "Limits: PHENOPOOL_MAX_UPLOAD_BYTES (default 100 MiB), PHENOPOOL_MAX_UPLOAD_ROWS (default 2,000,000).",
    "Exit status 0 when accepted (or, with --dry-run, acceptable), 2 when the file has problems.",
  ].join("\n"),
  async run(args, io) {
    const parsed = parseArgs(args);
    const db = getDb();
    const source = uploadSourceFromFile(parsed.file);
    const preview = await previewUpload(db, source, parsed.request);
    printPreview(preview, io);
    if (parsed.report) {
      writeFileSync(parsed.report, problemsToCsv(preview.problems, preview.totals));
      io.stdout(`Wrote ${preview.totals.problems} problems to ${parsed.report}.\n`);
    }
    if (!preview.acceptable) {
      printProblems(preview, io, parsed.report);
      return 2;
    }
    for (const line of describeDiff(preview.diff!)) io.stdout(`${line}\n`);
    if (preview.unchanged) {
      io.stdout(`Identical to the current submission ${preview.currentSubmissionId}: nothing to write.\n`);
      return 0;
    }
    if (parsed.dryRun) {
      io.stdout("Dry run: nothing was written.\n");
      return 0;
    }
    const accepted = await acceptUpload(
      db,
      source,
      { ...parsed.request, expectedSha256: preview.sha256!, expectedCurrentSubmissionId: preview.currentSubmissionId },
      COMMAND_LINE_ACTOR,
    );
    io.stdout(
      `Accepted as submission ${accepted.submissionId} (${accepted.rowCount} rows)${accepted.supersededId ? `, superseding submission ${accepted.supersededId}` : ""}.\n`,
    );
    if (accepted.job) {
      io.stdout(`Recomputing the site's estimates (job ${accepted.job.id})...\n`);
      for (;;) {
        const job = await getJob(db, accepted.job.id);
        if (job.status !== "queued" && job.status !== "running") {
          io.stdout(`Job ${job.id} ${job.status}${job.message ? `: ${job.message}` : ""}.\n`);
          break;
        }
        if (!(await runNextJob(db, JOB_HANDLERS))) await new Promise((resolve) => setTimeout(resolve, 500));
      }
    }
    return 0;
  },
};
