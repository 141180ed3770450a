import type { CliCommand } from "../command";
import { AppError } from "../../errors/app-error";
import { numericColumn, readCsvTable, textColumn } from "../../ingest/read-csv-table";
import { fitWarmingRate } from "../../stats/phenology/fit-warming-rate";
import { ModelInputError } from "../../stats/model-error";
import { choiceOption, formatTextTable, readOptions } from "../read-options";

const USAGE = `warming TEMPS.csv [--format table|json]

Each site's warming rate from its site-year mean spring temperatures: the least-squares slope on
year in degrees C per decade with its SE, and the Theil-Sen slope (Sen 1968) with Sen's 95%
interval as a robust alternative. Needs at least 3 years per site.

TEMPS.csv columns: site, year, mean_spring_temp_c; one row per site-year.`;

export const warmingCommand: CliCommand = {
  name: "warming",
  summary: "Warming rate per site (least squares and Theil-Sen, degrees C per decade) from spring temperatures.",
  usage: USAGE,
  async run(args, io) {
    const { positional, options } = readOptions(args, "warming", ["format"]);
    if (positional.length !== 1) throw new AppError("invalid_input", "give one TEMPS.csv file (see 'help warming')", [{ field: "file", message: "one file expected" }]);
    const format = choiceOption(options, "format", ["table", "json"] as const);
    const table = readCsvTable(positional[0]!);
    const sites = textColumn(table, "site");
    const years = numericColumn(table, "year");
    const temperatures = numericColumn(table, "mean_spring_temp_c");
    const bySite = new Map<string, number[]>();
    sites.forEach((site, row) => bySite.set(site, [...(bySite.get(site) ?? []), row]));
    const results: Record<string, unknown>[] = [];
    for (const [site, rows] of [...bySite].sort((a, b) => a[0].localeCompare(b[0]))) {
      try {
        const fit = fitWarmingRate(rows.map((r) => years[r]!), rows.map((r) => temperatures[r]!));
        results.push({
          site,
          slope_per_decade: fit.slopePerDecade,
          se: fit.standardError,
          df: fit.residualDf,
          theil_sen_per_decade: fit.theilSenPerDecade,
          theil_sen_lower: fit.theilSenLower,
          theil_sen_upper: fit.theilSenUpper,
          n: fit.n,
          first_year: fit.firstYear,
          last_year: fit.lastYear,
        });
      } catch (error) {
        if (!(error instanceof ModelInputError)) throw error;
        io.stderr(`site ${site}: not computed: ${error.message}\n`);
      }
    }
    if (format === "json") {
      io.stdout(`${JSON.stringify(results, null, 2)}\n`);
      return 0;
    }
    const f = (v: unknown) => (v as number).toFixed(3);
    io.stdout(
      formatTextTable(
        ["site", "years", "LS slope (C/decade)", "se", "Theil-Sen", "95% interval"],
        results.map((r) => [String(r.site), `${r.first_year}-${r.last_year} (${r.n})`, f(r.slope_per_decade), f(r.se), f(r.theil_sen_per_decade), `${f(r.theil_sen_lower)} to ${f(r.theil_sen_upper)}`]),
      ),
    );
    return 0;
  },
};
