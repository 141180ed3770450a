import type { CliCommand, CliIo } from "../command";
import { formatTextTable } from "../read-options";
import { fitOptionsOf, parsePoolingArgs, poolingOptionsUsage, requiredTextColumn, usageError, withPoolingInput } from "../pooling-options";
import { interval, levelLabel, modelLine, num, pEquals, pText, percent, warningLines } from "../sensitivity-format";
import { SUBGROUP_TAU2, subgroupAnalysis, type SubgroupResult, type SubgroupTau2 } from "../../stats/meta/sensitivity/subgroups";
import { subgroupsToJson } from "../../stats/meta/sensitivity/sensitivity-json";

const USAGE = `subgroups FILE.csv --estimate COL (--se COL | --variance COL) --by COL [options]

Subgroup analysis by a categorical column (e.g. species): a pooled estimate per subgroup and the
test of subgroup differences.

  --by COL              the column whose values form the subgroups (every row needs one)
  --tau2 separate       each subgroup pooled with its own tau^2; test: Q_between of the subgroup
                        estimates against chi-square(G - 1) (default)
  --tau2 common         one mixed-effects model with the subgroups as a categorical moderator and
                        one tau^2; test: the omnibus test of the subgroup contrasts

${poolingOptionsUsage({ moderators: false })}

With separate tau^2 a subgroup of one estimate is refused (it has no tau^2 of its own): merge or
drop it, or use --tau2 common, which keeps it with a warning.`;

function renderTable(result: SubgroupResult, file: string): string {
  const overall = result.overall;
  const level = levelLabel(overall.confidenceLevel);
  const lines = [
    `Subgroups by '${result.name}', ${result.tau2 === "separate" ? "tau^2 estimated separately in each subgroup" : `one common tau^2 = ${num(result.commonModel!.heterogeneity.tau2)}`}`,
    modelLine(overall, file),
    "",
  ];
  const headings = ["subgroup", "k", "estimate", "SE", `${level} CI`, "p", ...(result.tau2 === "separate" ? ["tau^2", "I^2"] : [])];
  const rows = result.groups.map((g) => [
    g.group,
    String(g.studies),
    num(g.estimate),
    num(g.standardError),
    interval(g.ciLower, g.ciUpper),
    pText(g.pValue),
    ...(g.fit ? [num(g.fit.heterogeneity.tau2), percent(g.fit.heterogeneity.i2)] : []),
  ]);
  lines.push(formatTextTable(headings, rows).trimEnd(), "");
  const t = result.test;
  const statistic = t.distribution === "chi-square" ? `chi-square = ${num(t.statistic)} on ${t.df} df` : `F = ${num(t.statistic)} on ${t.df} and ${t.denominatorDf} df`;
  lines.push(`Test of subgroup differences: ${statistic}, ${pEquals(t.pValue)}`, `  ${t.description}`);
  const pooled = overall.coefficients[0]!;
  lines.push(`All estimates pooled: ${num(pooled.estimate)} ${interval(pooled.ciLower, pooled.ciUpper)}, tau^2 ${num(overall.heterogeneity.tau2)}`);
  lines.push(...warningLines(result.warnings));
  return `${lines.join("\n")}\n`;
}

export const subgroupsCommand: CliCommand = {
  name: "subgroups",
  summary: "Subgroup analysis: a pooled estimate per subgroup and the test of subgroup differences.",
  usage: USAGE,
  async run(args: string[], io: CliIo) {
    const parsed = parsePoolingArgs("subgroups", args, { moderators: false, values: ["by", "tau2"] });
    const { pooling } = parsed;
    const by = parsed.single("by");
    if (by === undefined) throw usageError("subgroups", "--by COL is required", "by");
    const tau2 = (parsed.single("tau2") ?? "separate") as SubgroupTau2;
    if (!SUBGROUP_TAU2.includes(tau2)) throw usageError("subgroups", `--tau2 must be separate or common, got '${tau2}'`, "tau2");
    const result = withPoolingInput(pooling, (input, table) => {
      const { design: _design, ...options } = fitOptionsOf(pooling, input);
      return subgroupAnalysis(input.data, requiredTextColumn(table, by)!, { ...options, tau2, name: by });
    });
    io.stdout(pooling.format === "json" ? `${JSON.stringify(subgroupsToJson(result), null, 2)}\n` : renderTable(result, pooling.file));
    return 0;
  },
};
