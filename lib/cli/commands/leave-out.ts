import type { CliCommand, CliIo } from "../command";
import { formatTextTable } from "../read-options";
import { fitOptionsOf, parsePoolingArgs, poolingOptionsUsage, requiredTextColumn, withPoolingInput } from "../pooling-options";
import { interval, modelLine, num, percent, pText, warningLines } from "../sensitivity-format";
import { leaveOut, type LeaveOutResult } from "../../stats/meta/sensitivity/leave-out";
import { leaveOutToJson } from "../../stats/meta/sensitivity/sensitivity-json";

const USAGE = `leave-out FILE.csv --estimate COL (--se COL | --variance COL) [--by COL] [options]

Refits the model without each estimate in turn (or, with --by, without all the estimates of each
value of a column, e.g. a whole site), re-estimating tau^2 every time, and reports the pooled
estimate (or every coefficient) with its interval, tau^2, I^2 and Q each time.

  --by COL              leave out groups: every row with the same value of COL together
  --label COL           name the rows by this column in the output (default: study 1, 2, ...)

${poolingOptionsUsage()}

A refit that cannot be computed (one estimate left, a moderator level left without estimates) is
listed with the reason.`;

function renderTable(result: LeaveOutResult, file: string): string {
  const full = result.full;
  const terms = full.coefficients.map((c) => c.term);
  const lines = [
    `Leave-one-out: without each ${result.by === "estimate" ? "estimate" : "group"} in turn`,
    modelLine(full, file),
    `All estimates: ${terms.map((t, j) => `${t} ${num(full.coefficients[j]!.estimate)} ${interval(full.coefficients[j]!.ciLower, full.coefficients[j]!.ciUpper)}`).join("; ")}; tau^2 ${num(full.heterogeneity.tau2)}, I^2 ${percent(full.heterogeneity.i2)}`,
    "",
  ];
  const headings = ["left out", "k", ...terms.flatMap((t) => [t, "CI"]), "tau^2", "I^2", "Q", "p(Q)"];
  const rows = result.omissions.map((o) => {
    if (!o.refit.available) return [o.label, "", ...terms.flatMap(() => ["", ""]), "", "", "", `not computed: ${o.refit.reason}`];
    const fit = o.refit.fit;
    const h = fit.heterogeneity;
    return [o.label, String(fit.k), ...fit.coefficients.flatMap((c) => [num(c.estimate), interval(c.ciLower, c.ciUpper)]), num(h.tau2), percent(h.i2), num(h.q), pText(h.qPValue)];
  });
  lines.push(formatTextTable(headings, rows).trimEnd());
  lines.push(...warningLines([...full.warnings, ...result.warnings]));
  return `${lines.join("\n")}\n`;
}

export const leaveOutCommand: CliCommand = {
  name: "leave-out",
  summary: "Leave-one-out sensitivity analysis: refit without each estimate, or without each site.",
  usage: USAGE,
  async run(args: string[], io: CliIo) {
    const parsed = parsePoolingArgs("leave-out", args, { values: ["by", "label"] });
    const { pooling } = parsed;
    const result = withPoolingInput(pooling, (input, table) =>
      leaveOut(input.data, { ...fitOptionsOf(pooling, input), groups: requiredTextColumn(table, parsed.single("by")), labels: requiredTextColumn(table, parsed.single("label")) }),
    );
    io.stdout(pooling.format === "json" ? `${JSON.stringify(leaveOutToJson(result), null, 2)}\n` : renderTable(result, pooling.file));
    return 0;
  },
};
