import type { CliCommand, CliIo } from "../command";
import { AppError, type FieldError } from "../../errors/app-error";
import { isNumericColumn, numericColumn, readCsvTable, requireValues, textColumn, type CsvTable } from "../../ingest/read-csv-table";
import { ModelInputError } from "../../stats/model-error";
import { fitMetaModel } from "../../stats/meta/fit-meta-model";
import { metaData, StudyInputError } from "../../stats/meta/meta-data";
import { INFERENCE_TESTS, type InferenceTest } from "../../stats/meta/meta-inference";
import type { MetaModelResult } from "../../stats/meta/meta-result";
import { encodeModeratorRow, moderatorDesign, type ModeratorSpec } from "../../stats/meta/moderator-design";
import { metaResultToJson } from "../../stats/meta/result-json";
import { TAU2_METHODS, type Tau2Method } from "../../stats/meta/tau2-estimator";

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
  --level L             confidence level of every interval (default 0.95)

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

Output
  --format F            table (default) or json

Prediction interval: t with k - p - 1 df (k - 2 for the pooled mean, as in Higgins, Thompson &
Spiegelhalter 2009). I^2 is in percent, r2 (pseudo-R^2) a proportion. Rows are never dropped: an
empty or non-numeric cell in a used column is an error naming the row.`;

interface PoolArgs {
  file: string;
  estimate: string;
  se: string | undefined;
  variance: string | undefined;
  method: Tau2Method;
  test: InferenceTest;
  level: number;
  moderators: string[];
  categorical: Set<string>;
  references: Map<string, string>;
  centre: Set<string>;
  predictAt: Map<string, string>;
  permutations: number | undefined;
  seed: number;
  format: "table" | "json";
}

const VALUE_OPTIONS = new Set([
  "estimate",
  "se",
  "variance",
  "method",
  "test",
  "level",
  "moderator",
  "categorical",
  "reference",
  "centre",
  "predict-at",
  "permutations",
  "seed",
  "format",
]);

function usageError(message: string, field = "arguments"): AppError {
  return new AppError("invalid_input", `${message} (see 'help pool')`, [{ field, message }]);
}

function keyValue(option: string, text: string): [string, string] {
  const at = text.indexOf("=");
  if (at <= 0) throw usageError(`--${option} needs COL=VALUE, got '${text}'`, option);
  return [text.slice(0, at), text.slice(at + 1)];
}

function parseArgs(args: string[]): PoolArgs {
  const values = new Map<string, string[]>();
  const positional: string[] = [];
  for (let i = 0; i < args.length; i += 1) {
    const arg = args[i]!;
    if (!arg.startsWith("--")) {
      positional.push(arg);
      continue;
    }
    const [name, inline] = arg.slice(2).split(/=(.*)/s, 2) as [string, string | undefined];
    if (!VALUE_OPTIONS.has(name)) throw usageError(`unknown option --${name}`, name);
    const value = inline ?? args[(i += 1)];
    if (value === undefined || (inline === undefined && value.startsWith("--"))) throw usageError(`--${name} needs a value`, name);
    values.set(name, [...(values.get(name) ?? []), value]);
  }
  const single = (name: string): string | undefined => {
    const given = values.get(name);
    if (given && given.length > 1) throw usageError(`--${name} is given more than once`, name);
    return given?.[0];
  };
  if (positional.length !== 1) throw usageError(positional.length === 0 ? "give the CSV file to pool" : `one file at a time, got ${positional.join(", ")}`, "file");
  const estimate = single("estimate");
  if (!estimate) throw usageError("--estimate COL is required", "estimate");
  const se = single("se");
  const variance = single("variance");
  if ((se === undefined) === (variance === undefined)) throw usageError("give exactly one of --se COL and --variance COL", "se");
  const method = (single("method") ?? "reml") as Tau2Method;
  if (!TAU2_METHODS.includes(method)) throw usageError(`--method must be one of ${TAU2_METHODS.join(", ")}, got '${method}'`, "method");
  const test = (single("test") ?? "z") as InferenceTest;
  if (!INFERENCE_TESTS.includes(test)) throw usageError(`--test must be one of ${INFERENCE_TESTS.join(", ")}, got '${test}'`, "test");
  const format = single("format") ?? "table";
  if (format !== "table" && format !== "json") throw usageError(`--format must be table or json, got '${format}'`, "format");
  const levelText = single("level");
  const level = levelText === undefined ? 0.95 : Number(levelText);
  if (!(level > 0 && level < 1)) throw usageError(`--level must be a number between 0 and 1, got '${levelText}'`, "level");
  const permutationsText = single("permutations");
  const permutations = permutationsText === undefined ? undefined : Number(permutationsText);
  if (permutations !== undefined && !(Number.isInteger(permutations) && permutations >= 1 && permutations <= 1e6)) {
    throw usageError(`--permutations must be a whole number from 1 to 1000000, got '${permutationsText}'`, "permutations");
  }
  const seedText = single("seed");
  const seed = seedText === undefined ? 1 : Number(seedText);
  if (!Number.isSafeInteger(seed)) throw usageError(`--seed must be a whole number, got '${seedText}'`, "seed");
  if (seedText !== undefined && permutations === undefined) throw usageError("--seed only applies with --permutations", "seed");
  const moderators = values.get("moderator") ?? [];
  const duplicate = moderators.find((name, index) => moderators.indexOf(name) !== index);
  if (duplicate) throw usageError(`moderator '${duplicate}' is given twice`, "moderator");
  const references = new Map((values.get("reference") ?? []).map((text) => keyValue("reference", text)));
  const predictAt = new Map((values.get("predict-at") ?? []).map((text) => keyValue("predict-at", text)));
  const categorical = new Set(values.get("categorical") ?? []);
  const centre = new Set(values.get("centre") ?? []);
  for (const [option, names] of [["categorical", categorical], ["reference", references.keys()], ["centre", centre], ["predict-at", predictAt.keys()]] as const) {
    for (const name of names) if (!moderators.includes(name)) throw usageError(`--${option} names '${name}', which is not a --moderator`, option);
  }
  return { file: positional[0]!, estimate, se, variance, method, test, level, moderators, categorical, references, centre, predictAt, permutations, seed, format };
}

function moderatorSpecs(table: CsvTable, args: PoolArgs): ModeratorSpec[] {
  return args.moderators.map((name): ModeratorSpec => {
    requireValues(table, name);
    const categorical = args.categorical.has(name) || args.references.has(name) || !isNumericColumn(table, name);
    if (categorical) {
      if (args.centre.has(name)) throw usageError(`--centre applies to numeric moderators; '${name}' is categorical`, "centre");
      return { kind: "categorical", name, values: textColumn(table, name), reference: args.references.get(name) };
    }
    return { kind: "numeric", name, values: numericColumn(table, name), centre: args.centre.has(name) };
  });
}

/** Model input errors as application errors that point at the file, row and column. */
function asAppError(error: unknown, table: CsvTable, args: PoolArgs): unknown {
  if (!(error instanceof ModelInputError)) return error;
  const fieldErrors: FieldError[] = [];
  if (error instanceof StudyInputError) {
    const column =
      error.field === "estimate" ? args.estimate : error.field === "variance" || error.field === "standard_error" ? (args.se ?? args.variance)! : error.field;
    fieldErrors.push({ field: column, file: table.file, row: error.studyIndex === undefined ? undefined : error.studyIndex + 1, message: error.message });
    return new AppError("invalid_input", `${table.file}: ${error.message}`, fieldErrors);
  }
  return new AppError("cannot_compute", `${table.file}: ${error.message}`);
}

function fitFromTable(table: CsvTable, args: PoolArgs): MetaModelResult {
  const estimates = numericColumn(table, args.estimate);
  const spread = numericColumn(table, (args.se ?? args.variance)!);
  const data = metaData(args.se ? { estimates, standardErrors: spread } : { estimates, variances: spread });
  const specs = moderatorSpecs(table, args);
  const moderators = specs.length > 0 ? moderatorDesign(data.k, specs) : undefined;
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
  return fitMetaModel(data, {
    method: args.method,
    test: args.test,
    confidenceLevel: args.level,
    design: moderators?.design,
    predictAt,
    permutations: args.permutations === undefined ? undefined : { permutations: args.permutations, seed: args.seed },
  });
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
  if (result.method.method === "fe") return moderated ? "Common-effect meta-regression" : "Common-effect (inverse-variance) model";
  return `${moderated ? "Mixed-effects meta-regression" : "Random-effects model"}, tau^2 by ${result.method.name}`;
}

function renderTable(result: MetaModelResult, file: string): string {
  const level = `${Math.round(result.confidenceLevel * 1000) / 10}%`;
  const lines: string[] = [];
  lines.push(modelTitle(result));
  lines.push(`${file}: k = ${result.k} studies, p = ${result.p} coefficient${result.p === 1 ? "" : "s"}; ${result.test.name} test${result.test.df === null ? "" : ` on ${result.test.df} df`}; ${level} intervals`);
  lines.push("");
  const statisticName = result.test.test === "z" ? "z" : "t";
  const header = ["term", "estimate", "SE", statisticName, "p", `${level} CI`];
  const rows = result.coefficients.map((c) => [c.term, number(c.estimate), number(c.standardError), number(c.statistic), pValue(c.pValue), `[${number(c.ciLower)}, ${number(c.ciUpper)}]`]);
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j]!.length)));
  for (const row of [header, ...rows]) lines.push(row.map((cell, j) => (j === 0 ? cell.padEnd(widths[j]!) : cell.padStart(widths[j]!))).join("  "));
  lines.push("");
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
  return `${lines.join("\n")}\n`;
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
      throw asAppError(error, table, parsed);
    }
    io.stdout(parsed.format === "json" ? `${JSON.stringify(metaResultToJson(result), null, 2)}\n` : renderTable(result, parsed.file));
    return 0;
  },
};
