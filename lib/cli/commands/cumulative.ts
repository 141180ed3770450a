import type { CliCommand, CliIo } from "../command";
import { formatTextTable } from "../read-options";
import { fitOptionsOf, parsePoolingArgs, poolingOptionsUsage, usageError, withPoolingInput } from "../pooling-options";
import { interval, modelLine, num, percent, warningLines } from "../sensitivity-format";
import { isNumericColumn, numericColumn, requireValues, textColumn } from "../../ingest/read-csv-table";
import { cumulativeMetaAnalysis, type CumulativeResult, type OrderColumn } from "../../stats/meta/sensitivity/cumulative";
import { cumulativeToJson } from "../../stats/meta/sensitivity/sensitivity-json";

const USAGE = `cumulative FILE.csv --estimate COL (--se COL | --variance COL) --order COL [options]

Cumulative meta-analysis: adds the estimates in the order of a column (e.g. the year a site joined
the network, or its latitude) and refits the model after each step. Rows with the same value of
the column enter together, in one step.

  --order COL           the column to order by: numeric when every value is a number (ordered
                        numerically), otherwise text (ordered by character code)
  --descending          largest values first (default: smallest first)

${poolingOptionsUsage()}

The first steps are listed as not computed until enough estimates are included (two for the
pooled mean; more than the number of coefficients with moderators).`;

function renderTable(result: CumulativeResult, file: string): string {
  const terms = result.full.coefficients.map((c) => c.term);
  const lines = [
    `Cumulative meta-analysis ordered by '${result.order.name}' (${result.order.descending ? "largest" : "smallest"} first)`,
    modelLine(result.full, file),
    "",
  ];
  const headings = [result.order.name, "added", "k", ...terms.flatMap((t) => [t, "CI"]), "tau^2", "I^2"];
  const rows = result.steps.map((step) => {
    const head = [String(step.value), String(step.added.length), String(step.studies)];
    if (!step.refit.available) return [...head, ...terms.flatMap(() => ["", ""]), "", `not computed: ${step.refit.reason}`];
    const fit = step.refit.fit;
    return [...head, ...fit.coefficients.flatMap((c) => [num(c.estimate), interval(c.ciLower, c.ciUpper)]), num(fit.heterogeneity.tau2), percent(fit.heterogeneity.i2)];
  });
  lines.push(formatTextTable(headings, rows).trimEnd());
  lines.push(...warningLines([...result.full.warnings, ...result.warnings]));
  return `${lines.join("\n")}\n`;
}

export const cumulativeCommand: CliCommand = {
  name: "cumulative",
  summary: "Cumulative meta-analysis: add estimates in the order of a column and refit after each step.",
  usage: USAGE,
  async run(args: string[], io: CliIo) {
    const parsed = parsePoolingArgs("cumulative", args, { values: ["order"], flags: ["descending"] });
    const { pooling } = parsed;
    const name = parsed.single("order");
    if (name === undefined) throw usageError("cumulative", "--order COL is required", "order");
    const result = withPoolingInput(pooling, (input, table) => {
      requireValues(table, name);
      const order: OrderColumn = isNumericColumn(table, name) ? { kind: "numeric", name, values: numericColumn(table, name) } : { kind: "text", name, values: textColumn(table, name) };
      return cumulativeMetaAnalysis(input.data, order, { ...fitOptionsOf(pooling, input), descending: parsed.flags.has("descending") });
    });
    io.stdout(pooling.format === "json" ? `${JSON.stringify(cumulativeToJson(result), null, 2)}\n` : renderTable(result, pooling.file));
    return 0;
  },
};
