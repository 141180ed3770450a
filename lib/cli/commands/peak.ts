import type { CliCommand } from "../command";
import { AppError, type FieldError } from "../../errors/app-error";
import { numericColumn, readCsvTable, textColumn } from "../../ingest/read-csv-table";
import { conventionDayToDayOfYear } from "../../ingest/date-convention";
import { fitGaussianPeak } from "../../stats/phenology/fit-gaussian-peak";
import { ModelInputError } from "../../stats/model-error";
import { choiceOption, formatTextTable, readOptions } from "../read-options";

const USAGE = `peak FRASS.csv [--dates jan1|apr1] [--format table|json]

Estimates each site-year's caterpillar food-peak date from a frass-fall series by fitting a
Gaussian curve (height, peak date, width) by nonlinear least squares (Levenberg-Marquardt), with
the SE of the peak date from the fit. Fits whose peak lies outside the sampled dates or whose
width (SD) is outside 1-45 days are flagged; a fit that does not converge is refused.

FRASS.csv columns: site, year, date (day of the year in the --dates convention, default
1 = 1 January), frass (frass mass per trap per day, any unit); one row per trap and day or per day.`;

export const peakCommand: CliCommand = {
  name: "peak",
  summary: "Estimate food-peak dates from frass-fall series (Gaussian curve, Levenberg-Marquardt).",
  usage: USAGE,
  async run(args, io) {
    const { positional, options } = readOptions(args, "peak", ["dates", "format"]);
    if (positional.length !== 1) throw new AppError("invalid_input", "give one FRASS.csv file (see 'help peak')", [{ field: "file", message: "one file expected" }]);
    const convention = choiceOption(options, "dates", ["jan1", "apr1"] as const);
    const format = choiceOption(options, "format", ["table", "json"] as const);
    const table = readCsvTable(positional[0]!);
    const sites = textColumn(table, "site");
    const years = numericColumn(table, "year");
    const dates = numericColumn(table, "date");
    const frass = numericColumn(table, "frass");
    const errors: FieldError[] = [];
    const groups = new Map<string, { site: string; year: number; dates: number[]; frass: number[] }>();
    sites.forEach((site, row) => {
      try {
        if (!Number.isInteger(years[row]!)) throw new RangeError(`year ${years[row]} is not a whole number`);
        if (frass[row]! < 0) throw new RangeError(`frass ${frass[row]} is negative`);
        const day = conventionDayToDayOfYear(dates[row]!, convention, years[row]!);
        const key = `${site}\u0000${years[row]}`;
        if (!groups.has(key)) groups.set(key, { site, year: years[row]!, dates: [], frass: [] });
        groups.get(key)!.dates.push(day);
        groups.get(key)!.frass.push(frass[row]!);
      } catch (error) {
        errors.push({ file: table.file, row: row + 1, field: /frass/.test((error as Error).message) ? "frass" : /year/.test((error as Error).message) ? "year" : "date", message: (error as Error).message });
      }
    });
    if (errors.length) throw new AppError("invalid_input", `${table.file}: ${errors.length} problem(s); nothing was fitted`, errors.slice(0, 20));
    const results: Record<string, unknown>[] = [];
    for (const group of [...groups.values()].sort((a, b) => a.site.localeCompare(b.site) || a.year - b.year)) {
      try {
        const fit = fitGaussianPeak(group.dates, group.frass);
        if (!fit.converged) {
          io.stderr(`site ${group.site} ${group.year}: not computed: ${fit.warnings.map((w) => w.message).join("; ")}\n`);
          continue;
        }
        results.push({
          site: group.site,
          year: group.year,
          food_peak_date: fit.peakDate.estimate,
          se: fit.peakDate.standardError,
          height: fit.height.estimate,
          width: fit.width.estimate,
          n: fit.n,
          first_date: fit.firstDate,
          last_date: fit.lastDate,
          plausible: fit.plausible,
          warnings: fit.warnings,
        });
      } catch (error) {
        if (!(error instanceof ModelInputError)) throw error;
        io.stderr(`site ${group.site} ${group.year}: not computed: ${error.message}\n`);
      }
    }
    if (format === "json") {
      io.stdout(`${JSON.stringify(results, null, 2)}\n`);
      return 0;
    }
    const fixed = (v: unknown, digits: number) => (v as number).toFixed(digits);
    io.stdout(
      formatTextTable(
        ["site", "year", "peak (day of year)", "se", "width (SD, d)", "samples", "flag"],
        results.map((r) => [String(r.site), String(r.year), fixed(r.food_peak_date, 2), fixed(r.se, 2), fixed(r.width, 2), String(r.n), r.plausible ? "" : (r.warnings as { message: string }[]).map((w) => w.message).join("; ")]),
      ),
    );
    return 0;
  },
};
