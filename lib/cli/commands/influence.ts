import type { CliCommand, CliIo } from "../command";
import { formatTextTable } from "../read-options";
import { fitOptionsOf, parsePoolingArgs, poolingOptionsUsage, requiredTextColumn, withPoolingInput } from "../pooling-options";
import { modelLine, num, warningLines } from "../sensitivity-format";
import { influenceDiagnostics, type InfluenceResult } from "../../stats/meta/sensitivity/influence-diagnostics";
import { influenceToJson } from "../../stats/meta/sensitivity/sensitivity-json";

const USAGE = `influence FILE.csv --estimate COL (--se COL | --variance COL) [options]

Outlier and influence diagnostics for each estimate (Viechtbauer & Cheung 2010), each from a refit
without the estimate with tau^2 re-estimated: studentized deleted residual, DFFITS, Cook's
distance, covariance ratio, DFBETAS, hat value, tau^2 and Q without it; flags by stated rules of
thumb; and Baujat's contribution to Q against influence on the pooled result (common-effect fits).

  --label COL           name the rows by this column in the output (default: study 1, 2, ...)

${poolingOptionsUsage({ test: false })}

The diagnostics use the model-based covariance (X'WX)^-1 as Viechtbauer & Cheung define them, so
there is no --test option. Flags: "outlier" when |rstudent| passes its cut-off; "influential" when
DFFITS, Cook's distance, the hat value or a DFBETAS passes its cut-off (the rules are printed).`;

function renderTable(result: InfluenceResult, file: string): string {
  const { full } = result;
  const lines = ["Influence diagnostics (case deletion, tau^2 re-estimated each time)", modelLine(full, file), ""];
  const dfbetasHeading = full.p === 1 ? "DFBETAS" : "max|DFBETAS|";
  const headings = ["estimate", "weight", "hat", "rstudent", "DFFITS", "Cook", "COVRATIO", dfbetasHeading, "tau^2(-i)", "Q(-i)", "flags"];
  const rows = result.studies.map((s) => {
    const flags = [s.outlier ? "outlier" : "", s.influential ? "influential" : ""].filter(Boolean).join(", ");
    const head = [s.label, `${s.weightPercent.toFixed(1)}%`, num(s.leverage)];
    if (!s.deleted.available) return [...head, "", "", "", "", "", "", "", [flags, `not computed: ${s.deleted.reason}`].filter(Boolean).join("; ")];
    const d = s.deleted;
    const dfbetas = full.p === 1 ? d.dfbetas[0]! : d.dfbetas.reduce((m, x) => (Math.abs(x) > Math.abs(m) ? x : m), 0);
    return [...head, num(d.studentizedDeletedResidual), num(d.dffits), num(d.cooksDistance), num(d.covarianceRatio), num(dfbetas), num(d.tau2Deleted), num(d.qDeleted), flags];
  });
  lines.push(formatTextTable(headings, rows).trimEnd(), "", `Rules (k = ${full.studyCount}, p = ${full.p}; rules of thumb, common practice):`);
  for (const rule of result.rules) lines.push(`  ${rule.flags.padEnd(11)}  ${rule.rule}: threshold ${num(rule.threshold)}`);
  lines.push(`  source: ${result.rules[0]!.source}`);
  lines.push("", `Baujat coordinates (common-effect fits; Q = ${num(result.baujat.commonEffect.heterogeneity.q)})`);
  lines.push(
    formatTextTable(
      ["estimate", "contribution to Q", "influence on result"],
      result.baujat.points.map((p) => [p.label, num(p.contributionToQ), p.influenceOnEstimate === null ? `not computed: ${p.note}` : num(p.influenceOnEstimate)]),
    ).trimEnd(),
  );
  lines.push(...warningLines([...full.warnings, ...result.warnings]));
  return `${lines.join("\n")}\n`;
}

export const influenceCommand: CliCommand = {
  name: "influence",
  summary: "Outlier and influence diagnostics per estimate (case deletion), with Baujat coordinates.",
  usage: USAGE,
  async run(args: string[], io: CliIo) {
    const parsed = parsePoolingArgs("influence", args, { test: false, values: ["label"] });
    const { pooling } = parsed;
    const result = withPoolingInput(pooling, (input, table) => {
      const { test: _test, ...options } = fitOptionsOf(pooling, input);
      return influenceDiagnostics(input.data, { ...options, labels: requiredTextColumn(table, parsed.single("label")) });
    });
    io.stdout(pooling.format === "json" ? `${JSON.stringify(influenceToJson(result), null, 2)}\n` : renderTable(result, pooling.file));
    return 0;
  },
};
