import type { CliCommand } from "../command";
import { AppError, type FieldError } from "../../errors/app-error";
import { numericColumn, readCsvTable, textColumn, columnIndex, type CsvTable } from "../../ingest/read-csv-table";
import { broodRecordRowSchema } from "../../ingest/schemas/brood-record-row";
import { validateRows, findDuplicateKeys } from "../../ingest/validate-rows";
import { conventionDayToDayOfYear, type DateConventionName } from "../../ingest/date-convention";
import { computeSiteEstimates } from "../../estimates/compute-site-estimates";
import type { BroodForEstimates } from "../../estimates/estimate-types";
import { DEFAULT_MISMATCH_OFFSET_DAYS, DEFAULT_NESTLING_AGE_AT_PEAK_DEMAND_DAYS } from "../../estimates/mismatch";
import { ModelInputError } from "../../stats/model-error";
import { choiceOption, formatTextTable, integerOption, readOptions } from "../read-options";

const USAGE = `estimate BROODS.csv --peaks PEAKS.csv [options]

Computes every site's within-year and between-year effects of mismatch on fledging failure,
fledglings of successful broods, recruitment and recruits per female, and selection gradients on
lay date, from raw brood records (the same computation PhenoPool runs on uploaded records).

Files
  BROODS.csv            columns site, year, female_id, lay_date, clutch_size, fledglings, recruits
                        (hatch_date optional); one brood per row
  --peaks PEAKS.csv     columns site, year, food_peak_date

Options
  --offset D            days added to the lay date in mismatch = lay date + D - food peak (default 30)
  --mismatch-from B     lay (default) or hatch: hatch date + nestling age - food peak
  --nestling-age D      nestling age at peak food demand for --mismatch-from hatch (default 9)
  --dates C             jan1 (default: 1 = 1 January) or apr1 (1 = 1 April, converted on input)
  --bootstrap B         bootstrap replicates of the selection gradients (default 1000; 0 skips them)
  --seed S              seed of the bootstrap (default 1)
  --format F            table (default) or json (an array of estimates)

Estimates that cannot be computed are listed on stderr with the reason.`;

const OPTIONS = ["peaks", "offset", "mismatch-from", "nestling-age", "dates", "bootstrap", "seed", "format"] as const;

/** Dates of one column converted to days of year, with an error per bad cell. */
function dayColumn(table: CsvTable, name: string, years: Float64Array, convention: DateConventionName, optional: boolean): (number | null)[] {
  if (optional && !table.headers.includes(name)) return table.rows.map(() => null);
  const index = columnIndex(table, name);
  const errors: FieldError[] = [];
  const days = table.rows.map((cells, row) => {
    const cell = cells[index]!.trim();
    if (cell === "" && optional) return null;
    const day = Number(cell);
    try {
      if (cell === "" || !Number.isFinite(day)) throw new RangeError(`'${cell}' is not a day number`);
      return conventionDayToDayOfYear(day, convention, years[row]!);
    } catch (error) {
      errors.push({ file: table.file, row: row + 1, field: name, value: cell, message: (error as Error).message });
      return null;
    }
  });
  if (errors.length) throw new AppError("invalid_input", `${table.file}: ${errors.length} bad date(s) in column '${name}'`, errors.slice(0, 20));
  return days;
}

interface SiteInput {
  broods: BroodForEstimates[];
  peaks: Map<number, number>;
}

function readBroods(path: string, convention: DateConventionName): Map<string, SiteInput> {
  const table = readCsvTable(path);
  const sites = textColumn(table, "site");
  const years = numericColumn(table, "year");
  const lay = dayColumn(table, "lay_date", years, convention, false);
  const hatch = dayColumn(table, "hatch_date", years, convention, true);
  const clutch = numericColumn(table, "clutch_size");
  const fledglings = numericColumn(table, "fledglings");
  const recruits = numericColumn(table, "recruits");
  const females = textColumn(table, "female_id");
  const raw = sites.map((_, i) => ({
    year: years[i]!,
    femaleId: females[i]!,
    layDateDoy: lay[i]!,
    clutchSize: clutch[i]!,
    hatchDateDoy: hatch[i]!,
    fledglings: fledglings[i]!,
    recruits: recruits[i]!,
  }));
  const validation = validateRows(broodRecordRowSchema, raw, path);
  const siteOfRow = (row: number) => sites[validation.rowNumbers[row]! - 1]!;
  const duplicates = findDuplicateKeys(
    { rows: validation.rows.map((r, k) => ({ ...r, site: siteOfRow(k) })), rowNumbers: validation.rowNumbers },
    (r) => `${r.site}\u0000${r.year}\u0000${r.femaleId}`,
    (r, first) => `female ${r.femaleId} of site ${r.site} has two broods in ${r.year} (first at row ${first})`,
    "female_id",
    path,
  );
  const errors = [...validation.errors, ...duplicates];
  const emptySite = sites.findIndex((s) => s === "");
  if (emptySite >= 0) errors.push({ file: path, row: emptySite + 1, field: "site", message: "site must not be empty" });
  if (errors.length) throw new AppError("invalid_input", `${path}: ${errors.length} problem(s); nothing was computed`, errors.slice(0, 20));
  const bySite = new Map<string, SiteInput>();
  validation.rows.forEach((brood, k) => {
    const site = siteOfRow(k);
    if (!bySite.has(site)) bySite.set(site, { broods: [], peaks: new Map() });
    bySite.get(site)!.broods.push(brood);
  });
  return bySite;
}

function readPeaks(path: string, convention: DateConventionName, sites: Map<string, SiteInput>): void {
  const table = readCsvTable(path);
  const siteNames = textColumn(table, "site");
  const years = numericColumn(table, "year");
  const peaks = dayColumn(table, "food_peak_date", years, convention, false);
  const errors: FieldError[] = [];
  const seen = new Map<string, number>();
  siteNames.forEach((site, row) => {
    const key = `${site}\u0000${years[row]}`;
    if (!Number.isInteger(years[row]!)) errors.push({ file: path, row: row + 1, field: "year", message: "year must be a whole number" });
    else if (seen.has(key)) errors.push({ file: path, row: row + 1, field: "year", message: `site ${site} has a second food peak for ${years[row]} (first at row ${seen.get(key)})` });
    seen.set(key, row + 1);
    sites.get(site)?.peaks.set(years[row]!, peaks[row]!);
  });
  if (errors.length) throw new AppError("invalid_input", `${path}: ${errors.length} problem(s); nothing was computed`, errors.slice(0, 20));
}

function number(value: number): string {
  return Number.isInteger(value) ? String(value) : value.toPrecision(5);
}

export const estimateCommand: CliCommand = {
  name: "estimate",
  summary: "Compute per-site mismatch effects, between-year effects and selection gradients from brood records.",
  usage: USAGE,
  async run(args, io) {
    const { positional, options } = readOptions(args, "estimate", OPTIONS);
    if (positional.length !== 1) throw new AppError("invalid_input", "give one BROODS.csv file (see 'help estimate')", [{ field: "file", message: "one brood-record file expected" }]);
    const peaksFile = options.get("peaks");
    if (!peaksFile) throw new AppError("invalid_input", "--peaks PEAKS.csv is required (see 'help estimate')", [{ field: "peaks", message: "required" }]);
    const basis = choiceOption(options, "mismatch-from", ["lay", "hatch"] as const) === "lay" ? "lay_date" : "hatch_date";
    const offsetDays = integerOption(options, "offset", DEFAULT_MISMATCH_OFFSET_DAYS, 0, 80);
    const nestlingAgeDays = integerOption(options, "nestling-age", DEFAULT_NESTLING_AGE_AT_PEAK_DEMAND_DAYS, 0, 40);
    if (basis === "hatch_date" && options.has("offset")) throw new AppError("invalid_input", "--offset applies to lay-date mismatch; use --nestling-age with --mismatch-from hatch", [{ field: "offset", message: "not used with --mismatch-from hatch" }]);
    const convention = choiceOption(options, "dates", ["jan1", "apr1"] as const);
    const bootstrap = integerOption(options, "bootstrap", 1000, 0, 100_000);
    if (bootstrap === 1) throw new AppError("invalid_input", "--bootstrap must be 0 (no selection gradients) or at least 2", [{ field: "bootstrap", message: "1 replicate gives no SE" }]);
    const seed = integerOption(options, "seed", 1, -(2 ** 31), 2 ** 32);
    const format = choiceOption(options, "format", ["table", "json"] as const);

    const sites = readBroods(positional[0]!, convention);
    readPeaks(peaksFile, convention, sites);
    const output: Record<string, unknown>[] = [];
    for (const [site, input] of [...sites].sort((a, b) => a[0].localeCompare(b[0]))) {
      let result;
      try {
        result = computeSiteEstimates(input.broods, input.peaks, { basis, offsetDays, nestlingAgeDays, selectionGradients: bootstrap > 0, bootstrapReplicates: bootstrap, seed });
      } catch (error) {
        if (error instanceof ModelInputError) throw new AppError("cannot_compute", `site ${site}: ${error.message}`);
        throw error;
      }
      for (const w of result.warnings) io.stderr(`site ${site}: ${w.message}\n`);
      for (const r of result.refused) io.stderr(`site ${site}: not computed: ${r.outcome} ${r.level}${r.year === null ? "" : ` ${r.year}`}: ${r.reason}\n`);
      for (const e of result.estimates) output.push({ site, outcome: e.outcome, level: e.level, term: e.term, year: e.year, estimate: e.estimate, se: e.se, n: e.n, link: e.link, scale: e.scale, method: e.method, warnings: e.warnings });
    }
    if (format === "json") {
      io.stdout(`${JSON.stringify(output, null, 2)}\n`);
      return 0;
    }
    const rows = output.map((e) => [
      String(e.site),
      String(e.outcome),
      String(e.level),
      String(e.term),
      e.year === null ? "site" : String(e.year),
      number(e.estimate as number),
      number(e.se as number),
      String(e.n),
      String(e.link),
      String(e.scale),
      (e.warnings as unknown[]).length ? "see json" : "",
    ]);
    io.stdout(formatTextTable(["site", "outcome", "level", "term", "year", "estimate", "se", "n", "link", "scale", "warnings"], rows));
    io.stdout(`\n${output.length} estimates. Mismatch = ${basis === "lay_date" ? `lay date + ${offsetDays}` : `hatch date + ${nestlingAgeDays}`} d - food-peak date; method text per estimate with --format json.\n`);
    return 0;
  },
};
