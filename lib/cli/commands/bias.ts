import type { CliCommand, CliIo } from "../command";
import { formatTextTable } from "../read-options";
import { fitOptionsOf, parsePoolingArgs, poolingOptionsUsage, requiredTextColumn, usageError, withPoolingInput } from "../pooling-options";
import { interval, levelLabel, modelLine, num, pEquals, warningLines } from "../sensitivity-format";
import { smallStudyAnalyses, type SmallStudyAnalyses } from "../../stats/meta/small-study/small-study-analyses";
import { smallStudyToJson } from "../../stats/meta/small-study/small-study-json";
import { FUNNEL_SIDES, TRIM_FILL_ESTIMATORS, type FunnelSide, type TrimFillEstimator } from "../../stats/meta/small-study/trim-and-fill";

const USAGE = `bias FILE.csv --estimate COL (--se COL | --variance COL) [options]

Small-study and publication-bias analyses of the pooled mean, reported as sensitivity analyses
(none of them corrects the pooled estimate): funnel-plot data with the pseudo 95% region and the
significance contours at p = 0.10, 0.05 and 0.01; Egger's regression test and its meta-regression
form with the standard error as moderator; Begg and Mazumdar's rank correlation test; and
trim-and-fill with the filled estimates.

  --estimator E         trim-and-fill estimator: l0 (default) or r0 (Duval & Tweedie 2000)
  --side S              the side the missing estimates are assumed on: left or right (default:
                        from the sign of Egger's intercept)
  --label COL           name the rows by this column in the output (default: study 1, 2, ...)

${poolingOptionsUsage({ moderators: false })}

The method and test apply to the pooled mean, the regression on the standard error and
trim-and-fill; Egger's test is ordinary least squares and the rank test uses the common-effect
estimate, as their authors define them. The analyses need at least 3 estimates; with fewer than
10 the tests have little power (a warning says so).`;

function renderTable(result: SmallStudyAnalyses, file: string): string {
  const { model, funnel } = result;
  const level = levelLabel(model.confidenceLevel);
  const pooled = model.coefficients[0]!;
  const lines = ["Small-study and publication-bias analyses (sensitivity analyses, not corrections)", modelLine(model, file), ""];
  lines.push(`Pooled estimate: ${num(pooled.estimate)} ${interval(pooled.ciLower, pooled.ciUpper)}`);
  lines.push(
    `Funnel: ${funnel.points.length} estimates, SE up to ${num(funnel.maxStandardError)}; pseudo 95% region at that SE ${interval(funnel.pseudoConfidenceRegion.lowerAtMaxSe, funnel.pseudoConfidenceRegion.upperAtMaxSe)}`,
  );
  lines.push(`  significance contours around ${num(funnel.nullValue)}: ${funnel.contours.map((c) => `p = ${c.p} at +/-${num(c.z)} SE`).join("; ")}`);
  lines.push("", "Egger's regression test (OLS of y/SE on 1/SE)");
  if (result.egger.available) {
    const { intercept, slope } = result.egger;
    lines.push(`  intercept (asymmetry) ${num(intercept.estimate)} (SE ${num(intercept.standardError)}), t = ${num(intercept.statistic)} on ${intercept.df} df, ${pEquals(intercept.pValue)}, ${level} CI ${interval(intercept.ciLower, intercept.ciUpper)}`);
    lines.push(`  slope (effect at infinite precision) ${num(slope.estimate)} (SE ${num(slope.standardError)})`);
  } else lines.push(`  not computed: ${result.egger.reason}`);
  lines.push("", "Meta-regression on the standard error");
  if (result.standardErrorRegression.available) {
    const r = result.standardErrorRegression;
    const c = r.standardErrorCoefficient;
    lines.push(`  SE coefficient ${num(c.estimate)} (SE ${num(c.standardError)}), ${r.fit.test.test === "z" ? "z" : "t"} = ${num(c.statistic)}, ${pEquals(c.pValue)}; intercept ${num(r.fit.coefficients[0]!.estimate)}; tau^2 ${num(r.fit.heterogeneity.tau2)}`);
  } else lines.push(`  not computed: ${result.standardErrorRegression.reason}`);
  lines.push("", "Rank correlation test (Begg & Mazumdar)");
  if (result.rankCorrelation.available) {
    const c = result.rankCorrelation.correlation;
    lines.push(
      `  Kendall's tau = ${num(c.tau)}, z = ${num(c.z)}, ${pEquals(c.pValue)} (normal approximation)${c.exactPValue === null ? `; ${c.exactNote}` : `; exact ${pEquals(c.exactPValue)}`}`,
    );
  } else lines.push(`  not computed: ${result.rankCorrelation.reason}`);
  lines.push("", "Trim-and-fill");
  if (result.trimAndFill.available) {
    const t = result.trimAndFill;
    const adjusted = t.adjusted.coefficients[0]!;
    lines.push(`  estimator ${t.estimator.toUpperCase()}; side ${t.side} (${t.sideReason})`);
    lines.push(`  k0 = ${t.k0} estimate(s) filled (estimator value ${num(t.estimatorValue)}, ${t.steps} round(s), ${t.converged ? "settled" : "DID NOT SETTLE"})`);
    lines.push(`  pooled estimate with the filled estimates: ${num(adjusted.estimate)} ${interval(adjusted.ciLower, adjusted.ciUpper)}, tau^2 ${num(t.adjusted.heterogeneity.tau2)}`);
    if (t.filled.length > 0) {
      lines.push(formatTextTable(["filled estimate", "value", "SE"], t.filled.map((f) => [f.label, num(f.estimate), num(f.standardError)])).trimEnd().replace(/^/gm, "  "));
    }
  } else lines.push(`  not computed: ${result.trimAndFill.reason}`);
  lines.push("", "Notes", ...result.notes.map((note) => `  - ${note}`));
  lines.push(...warningLines([...model.warnings, ...result.warnings]));
  return `${lines.join("\n")}\n`;
}

export const biasCommand: CliCommand = {
  name: "bias",
  summary: "Small-study analyses: funnel data, Egger and rank tests, trim-and-fill (sensitivity analyses).",
  usage: USAGE,
  async run(args: string[], io: CliIo) {
    const parsed = parsePoolingArgs("bias", args, { moderators: false, values: ["estimator", "side", "label"] });
    const { pooling } = parsed;
    const estimator = (parsed.single("estimator") ?? "l0") as TrimFillEstimator;
    if (!TRIM_FILL_ESTIMATORS.includes(estimator)) throw usageError("bias", `--estimator must be l0 or r0, got '${estimator}'`, "estimator");
    const side = parsed.single("side") as FunnelSide | undefined;
    if (side !== undefined && !FUNNEL_SIDES.includes(side)) throw usageError("bias", `--side must be left or right, got '${side}'`, "side");
    const result = withPoolingInput(pooling, (input, table) => {
      const { design: _design, ...options } = fitOptionsOf(pooling, input);
      return smallStudyAnalyses(input.data, { ...options, estimator, side, labels: requiredTextColumn(table, parsed.single("label")) });
    });
    io.stdout(pooling.format === "json" ? `${JSON.stringify(smallStudyToJson(result), null, 2)}\n` : renderTable(result, pooling.file));
    return 0;
  },
};
