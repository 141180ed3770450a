import type { CliCommand, CliIo } from "../command";
import { keyValueOption, parsePoolingArgs, poolingInputError, readPoolingInput, requiredTextColumn, usageError as poolingUsageError, type PoolingArgs } from "../pooling-options";
import { columnIndex, readCsvTable, type CsvTable } from "../../ingest/read-csv-table";
import { fitMetaModel } from "../../stats/meta/fit-meta-model";
import { fitMultilevelModel, MULTILEVEL_METHODS, type MultilevelMethod } from "../../stats/meta/multilevel/fit-multilevel-model";
import { addClusterRobustInference } from "../../stats/meta/robust/cluster-robust-inference";
import type { MetaModelResult } from "../../stats/meta/meta-result";
import { encodeModeratorRow } from "../../stats/meta/moderator-design";
import { metaResultToJson } from "../../stats/meta/result-json";

const USAGE = `pool FILE.csv --estimate COL (--se COL | --variance COL) [options]

Pools one effect estimate per row (a study, site or site-year) with a common-effect, random-effects
or mixed-effects (meta-regression) model, and reports heterogeneity, tests and intervals.

Required
  FILE.csv              comma-separated, one heading row, one study per row
  --estimate COL        column of effect estimates
  --se COL              column of standard errors, or
  --variance COL        column of sampling variances (give exactly one of the two)

Model
  --method M            fe (common effect), dl (DerSimonian-Laird), reml (default), ml, pm
                        (Paule-Mandel), he (Hedges), sj (Sidik-Jonkman)
  --test T              z (Wald, default) or hksj (Knapp-Hartung: t and F on k - p df)
  --confidence L        confidence level of every interval (default 0.95)

Moderators (meta-regression)
  --moderator COL       add a moderator; repeat for several. A column whose every value is a
                        number is numeric (entered as given); any other column is categorical,
                        coded as treatment contrasts against a reference level (terms COL[level]).
                        Every row needs a value (an empty or NA cell is an error, never dropped).
  --categorical COL     treat a numeric-looking moderator (e.g. a year code) as categorical
  --reference COL=LEVEL reference level of a categorical moderator (default: first in sorted order)
  --centre COL          centre a numeric moderator at its mean (the intercept is then the effect
                        at the mean)
  --predict-at COL=VAL  moderator values for the prediction interval (give every moderator);
                        without moderators the prediction is for the pooled mean
  --permutations N      permutation test of the moderators with N random permutations (every
                        ordering when k! <= N)
  --seed S              seed of the permutations (default 1)

Multilevel models and cluster-robust inference
  --level COL           a grouping level for nested random intercepts; repeat for several,
                        outermost first (e.g. --level species --level site --level site_year).
                        Groups are paths: site 'S1' of two species is two sites. Fitted by reml
                        (default) or ml, with a profile-likelihood interval, I^2 and a
                        likelihood-ratio test (50:50 mixture of chi2_0 and chi2_1) per level
  --cluster COL         cluster-robust (CR2) standard errors clustered by COL, with t tests on
                        Satterthwaite df, beside the model-based ones; with --level, each group
                        of the outermost level must lie within one cluster

  Within- versus between-year effects (are between-year effects weaker?):
    --moderator estimate_level --reference estimate_level=within
    --level site --level estimate_id --cluster site
  (estimate_id: a column with a distinct value per row)

Output
  --format F            table (default) or json

Prediction interval: t with k - p - 1 df (k - 2 for the pooled mean, as in Higgins, Thompson &
Spiegelhalter 2009). I^2 is in percent, r2 (pseudo-R^2) a proportion. Rows are never dropped: an
empty or non-numeric cell in a used column is an error naming the row.`;

interface PoolArgs extends PoolingArgs {
  predictAt: Map<string, string>;
  permutations: number | undefined;
  seed: number;
  /** Grouping columns of a multilevel model, outermost first. */
  levels: string[];
  cluster: string | undefined;
}

function usageError(message: string, field = "arguments") {
  return poolingUsageError("pool", message, field);
}

function parseArgs(args: string[]): PoolArgs {
  const { pooling, values, single } = parsePoolingArgs("pool", args, { values: ["predict-at", "permutations", "seed", "level", "cluster"], confidenceOption: "confidence" });
  const permutationsText = single("permutations");
  const permutations = permutationsText === undefined ? undefined : Number(permutationsText);
  if (permutations !== undefined && !(Number.isInteger(permutations) && permutations >= 1 && permutations <= 1e6)) {
    throw usageError(`--permutations must be a whole number from 1 to 1000000, got '${permutationsText}'`, "permutations");
  }
  const seedText = single("seed");
  const seed = seedText === undefined ? 1 : Number(seedText);
  if (!Number.isSafeInteger(seed)) throw usageError(`--seed must be a whole number, got '${seedText}'`, "seed");
  if (seedText !== undefined && permutations === undefined) throw usageError("--seed only applies with --permutations", "seed");
  const predictAt = keyValueOption("pool", "predict-at", values.get("predict-at"));
  for (const name of predictAt.keys()) if (!pooling.moderators.includes(name)) throw usageError(`--predict-at names '${name}', which is not a --moderator`, "predict-at");
  const levels = values.get("level") ?? [];
  const repeated = levels.find((name, index) => levels.indexOf(name) !== index);
  if (repeated) throw usageError(`--level '${repeated}' is given twice`, "level");
  if (levels.length > 0) {
    if (!MULTILEVEL_METHODS.includes(pooling.method as MultilevelMethod)) throw usageError(`a multilevel model (--level) is fitted by --method ${MULTILEVEL_METHODS.join(" or ")}, not '${pooling.method}'`, "method");
    if (pooling.test !== "z") throw usageError("--test hksj applies to single-level models; with --level use --cluster for small-sample robust tests", "test");
    if (permutations !== undefined) throw usageError("--permutations applies to single-level models, not with --level", "permutations");
  }
  return { ...pooling, predictAt, permutations, seed, levels, cluster: single("cluster") };
}

/** A grouping or cluster column; a --level that reads as a confidence level gets a pointer to --confidence. */
function groupingColumn(table: CsvTable, name: string, option: "level" | "cluster"): string[] {
  if (option === "level" && !table.headers.includes(name) && Number(name) > 0 && Number(name) < 1) {
    throw usageError(`--level names a grouping column of a multilevel model; give the confidence level as --confidence ${name}`, "level");
  }
  columnIndex(table, name);
  return requiredTextColumn(table, name)!;
}

function fitFromTable(table: CsvTable, args: PoolArgs): MetaModelResult {
  const { data, specs, moderators } = readPoolingInput(table, args);
  let predictAt: Float64Array | undefined;
  if (moderators && args.predictAt.size > 0) {
    const values: Record<string, number | string> = {};
    for (const spec of specs) {
      const text = args.predictAt.get(spec.name);
      if (text === undefined) throw usageError(`--predict-at needs a value for every moderator; '${spec.name}' is missing`, "predict-at");
      values[spec.name] = spec.kind === "numeric" ? Number(text) : text;
    }
    predictAt = encodeModeratorRow(moderators, values);
  }
  if (!moderators && args.predictAt.size > 0) throw usageError("--predict-at needs moderators", "predict-at");
  const cluster = args.cluster === undefined ? undefined : { name: args.cluster, labels: groupingColumn(table, args.cluster, "cluster") };
  if (args.levels.length > 0) {
    return fitMultilevelModel(data, {
      levels: args.levels.map((name) => ({ name, values: groupingColumn(table, name, "level") })),
      method: args.method as MultilevelMethod,
      confidenceLevel: args.level,
      design: moderators?.design,
      predictAt,
      cluster,
    });
  }
  const fit = fitMetaModel(data, {
    method: args.method,
    test: args.test,
    confidenceLevel: args.level,
    design: moderators?.design,
    predictAt,
    permutations: args.permutations === undefined ? undefined : { permutations: args.permutations, seed: args.seed },
  });
  return cluster === undefined ? fit : addClusterRobustInference(fit, data, cluster, moderators?.design);
}

function number(value: number): string {
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  return magnitude >= 1e-4 && magnitude < 1e7 ? String(Number(value.toPrecision(5))) : value.toExponential(3);
}

function pValue(value: number): string {
  if (value === 0) return "< 1e-16";
  return value < 1e-4 ? value.toExponential(2) : String(Number(value.toPrecision(3)));
}

function percent(value: number): string {
  return `${value.toFixed(1)}%`;
}

function modelTitle(result: MetaModelResult): string {
  const moderated = result.moderatorTest !== null;
  if (result.multilevel) return `Multilevel ${moderated ? "meta-regression" : "random-effects model"} (${result.multilevel.components.map((c) => c.level).join(" / ")}), variances by ${result.method.name.replace(" (multilevel)", "")}`;
  if (result.method.method === "fe") return moderated ? "Common-effect meta-regression" : "Common-effect (inverse-variance) model";
  return `${moderated ? "Mixed-effects meta-regression" : "Random-effects model"}, tau^2 by ${result.method.name}`;
}

function renderTable(result: MetaModelResult, file: string): string {
  const level = `${Math.round(result.confidenceLevel * 1000) / 10}%`;
  const lines: string[] = [];
  lines.push(modelTitle(result));
  lines.push(`${file}: k = ${result.k} ${result.multilevel ? "estimates" : "studies"}, p = ${result.p} coefficient${result.p === 1 ? "" : "s"}; ${result.test.name} test${result.test.df === null ? "" : ` on ${result.test.df} df`}; ${level} intervals`);
  lines.push("");
  const statisticName = result.test.test === "z" ? "z" : "t";
  const header = ["term", "estimate", "SE", statisticName, "p", `${level} CI`];
  const rows = result.coefficients.map((c) => [c.term, number(c.estimate), number(c.standardError), number(c.statistic), pValue(c.pValue), `[${number(c.ciLower)}, ${number(c.ciUpper)}]`]);
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j]!.length)));
  for (const row of [header, ...rows]) lines.push(row.map((cell, j) => (j === 0 ? cell.padEnd(widths[j]!) : cell.padStart(widths[j]!))).join("  "));
  lines.push("");
  if (result.robust) lines.push(...robustLines(result));
  if (result.multilevel) lines.push(...multilevelLines(result, level));
  else lines.push(...heterogeneityLines(result, level));
  lines.push(...testLines(result, level));
  return `${lines.join("\n")}\n`;
}

function multilevelLines(result: MetaModelResult, level: string): string[] {
  const summary = result.multilevel!;
  const h = result.heterogeneity;
  const lines = [`Variance components (${h.scope === "total" ? "between estimates" : "residual, not explained by the moderators"}; ${level} profile-likelihood intervals)`];
  const header = ["level", "groups", "sigma^2", "SE", `${level} CI`, "I^2", "LRT", "p (mixture)"];
  const rows = summary.components.map((c) => [
    c.level,
    String(c.groups),
    number(c.sigma2),
    c.standardError === null ? "-" : number(c.standardError),
    c.interval.available ? `[${number(c.interval.lower)}, ${number(c.interval.upper)}]` : "n/a",
    percent(c.i2),
    c.test.available ? number(c.test.statistic) : "n/a",
    c.test.available ? pValue(c.test.pValue) : "n/a",
  ]);
  const widths = header.map((cell, j) => Math.max(cell.length, ...rows.map((r) => r[j]!.length)));
  for (const row of [header, ...rows]) lines.push(`  ${row.map((cell, j) => (j === 0 ? cell.padEnd(widths[j]!) : cell.padStart(widths[j]!))).join("  ")}`);
  lines.push(`  total sigma^2 ${number(summary.totalSigma2)}, total I^2 ${percent(summary.totalI2)} (typical within-study variance ${number(summary.typicalWithinStudyVariance)})`);
  lines.push("  LRT: each level against the model without it; p from the 50:50 mixture of chi2_0 and chi2_1 (variance 0 is on the boundary)");
  lines.push(`  Q      ${number(h.q)} on ${h.qDf} df, p ${h.qPValue === 0 ? "< 1e-16" : `= ${pValue(h.qPValue)}`}`);
  const ic = summary.informationCriteria;
  lines.push(`  AIC ${number(ic.aic)}, BIC ${number(ic.bic)} (${ic.parameters} parameters${result.fit.logLikelihoodKind === "restricted" ? "; REML: compare only models with the same moderators" : ""})`);
  return lines;
}

function robustLines(result: MetaModelResult): string[] {
  const robust = result.robust!;
  const level = `${Math.round(robust.confidenceLevel * 1000) / 10}%`;
  const lines = [`Cluster-robust (CR2) inference: ${robust.clusterCount} clusters by '${robust.cluster}' (${robust.smallestCluster}-${robust.largestCluster} estimates each), t on Satterthwaite df`];
  const header = ["term", "estimate", "robust SE", "df", "t", "p", `${level} CI`];
  const rows = robust.coefficients.map((c) => [c.term, number(c.estimate), number(c.standardError), number(c.df), number(c.statistic), pValue(c.pValue), `[${number(c.ciLower)}, ${number(c.ciUpper)}]`]);
  const widths = header.map((cell, j) => Math.max(cell.length, ...rows.map((r) => r[j]!.length)));
  for (const row of [header, ...rows]) lines.push(row.map((cell, j) => (j === 0 ? cell.padEnd(widths[j]!) : cell.padStart(widths[j]!))).join("  "));
  lines.push("");
  return lines;
}

function heterogeneityLines(result: MetaModelResult, level: string): string[] {
  const lines: string[] = [];
  const h = result.heterogeneity;
  lines.push(`Heterogeneity (${h.scope === "total" ? "between studies" : "residual, not explained by the moderators"})`);
  const interval = h.interval.available ? h.interval : null;
  const ci = (lower: number, upper: number, format: (x: number) => string): string => `  ${level} CI [${format(lower)}, ${format(upper)}]`;
  lines.push(`  tau^2  ${number(h.tau2)}${h.tau2StandardError === null ? "" : ` (SE ${number(h.tau2StandardError)})`}${interval ? `${ci(interval.tau2Lower, interval.tau2Upper, number)} (Q-profile)` : ""}`);
  lines.push(`  tau    ${number(h.tau)}`);
  lines.push(`  I^2    ${percent(h.i2)}${interval ? ci(interval.i2Lower, interval.i2Upper, percent) : ""}`);
  lines.push(`  H^2    ${number(h.h2)}${interval ? ci(interval.h2Lower, interval.h2Upper, number) : ""}`);
  lines.push(`  Q      ${number(h.q)} on ${h.qDf} df, p ${h.qPValue === 0 ? "< 1e-16" : `= ${pValue(h.qPValue)}`}`);
  if (!h.interval.available) lines.push(`  (no interval: ${h.interval.reason})`);
  return lines;
}

function testLines(result: MetaModelResult, level: string): string[] {
  const lines: string[] = [];
  if (result.moderatorTest) {
    const t = result.moderatorTest;
    const statistic = t.distribution === "chi-square" ? `Q_M = ${number(t.statistic)} on ${t.df} df` : `F = ${number(t.statistic)} on ${t.df} and ${t.denominatorDf} df`;
    lines.push(`Test of the moderators (${t.terms.join(", ")}): ${statistic}, p = ${pValue(t.pValue)}`);
  }
  if (result.residualHeterogeneity) {
    const r = result.residualHeterogeneity;
    lines.push(`Residual heterogeneity: Q_E = ${number(r.q)} on ${r.df} df, p = ${pValue(r.pValue)}`);
  }
  if (result.pseudoR2) {
    lines.push(result.pseudoR2.available ? `Pseudo-R^2: ${percent(100 * result.pseudoR2.value)} (tau^2 without moderators ${number(result.pseudoR2.tau2InterceptOnly)})` : `Pseudo-R^2: not available (${result.pseudoR2.reason})`);
  }
  const prediction = result.prediction;
  if ("interval" in prediction) {
    const at = result.moderatorTest ? ` at ${result.coefficients.map((c, j) => `${c.term} = ${number(prediction.at[j]!)}`).slice(1).join(", ")}` : "";
    lines.push(`Mean effect${at}: ${number(prediction.estimate)}, ${level} CI [${number(prediction.ciLower)}, ${number(prediction.ciUpper)}]`);
    lines.push(
      prediction.interval.available
        ? `Prediction interval for a new study (t, ${prediction.interval.df} df): [${number(prediction.interval.lower)}, ${number(prediction.interval.upper)}]`
        : `Prediction interval: not available (${prediction.interval.reason})`,
    );
  } else {
    lines.push(`Prediction interval: give --predict-at values for every moderator (${prediction.reason})`);
  }
  if (result.permutationTest) {
    const perm = result.permutationTest;
    const perTerm = result.coefficients.flatMap((c, j) => (perm.coefficientPValues[j] === null ? [] : [`${c.term} p = ${pValue(perm.coefficientPValues[j]!)}`]));
    lines.push(`Permutation test (${perm.exact ? `all ${perm.permutations} orderings` : `${perm.permutations} permutations, seed ${perm.seed}`}): moderators p = ${pValue(perm.moderatorTestPValue)}; ${perTerm.join("; ")}`);
  }
  lines.push(
    `Fit: ${result.fit.converged ? "converged" : "DID NOT CONVERGE"}${result.fit.iterations > 0 ? ` after ${result.fit.iterations} iterations` : " (closed form)"}; ${result.fit.logLikelihoodKind} log-likelihood ${number(result.fit.logLikelihood)}`,
  );
  if (result.warnings.length > 0) {
    lines.push("", "Warnings");
    result.warnings.forEach((w, i) => lines.push(`  ${i + 1}. ${w.message} [${w.code}]`));
  }
  return lines;
}

export const poolCommand: CliCommand = {
  name: "pool",
  summary: "Pool effect estimates from a CSV file: random-effects meta-analysis and meta-regression.",
  usage: USAGE,
  async run(args: string[], io: CliIo) {
    const parsed = parseArgs(args);
    const table = readCsvTable(parsed.file);
    let result: MetaModelResult;
    try {
      result = fitFromTable(table, parsed);
    } catch (error) {
      throw poolingInputError(error, table, parsed);
    }
    io.stdout(parsed.format === "json" ? `${JSON.stringify(metaResultToJson(result), null, 2)}\n` : renderTable(result, parsed.file));
    return 0;
  },
};
