/**
 * The options the pooling commands share (`pool`, `influence`, `leave-out`, `cumulative`,
 * `subgroups`, `bias`): the columns of the estimates and their spread, the tau^2 method, the test,
 * the confidence level, the moderators and the output format; their parsing; and the step from a
 * CSV table to the model's input, with model errors turned into errors that name the file, row
 * and column. One place, so an option means the same in every command.
 */
import { AppError, type FieldError } from "../errors/app-error";
import { isNumericColumn, numericColumn, readCsvTable, requireValues, textColumn, type CsvTable } from "../ingest/read-csv-table";
import { ModelInputError } from "../stats/model-error";
import { metaData, StudyInputError, type MetaData } from "../stats/meta/meta-data";
import { INFERENCE_TESTS, type InferenceTest } from "../stats/meta/meta-inference";
import { moderatorDesign, type ModeratorDesign, type ModeratorSpec } from "../stats/meta/moderator-design";
import { TAU2_METHODS, type Tau2Method } from "../stats/meta/tau2-estimator";

export interface PoolingArgs {
  command: string;
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
  format: "table" | "json";
}

export interface ParsedPoolingArgs {
  pooling: PoolingArgs;
  /** Every value given, by option name (repeatable options keep all of theirs). */
  values: Map<string, string[]>;
  /** The value of an option that may be given once; throws AppError when repeated. */
  single: (name: string) => string | undefined;
  /** Flags (options without a value) that were given. */
  flags: Set<string>;
}

export interface PoolingOptionSet {
  /** Accept --moderator, --categorical, --reference, --centre. Default true. */
  moderators?: boolean;
  /** Accept --test. Default true. */
  test?: boolean;
  /** The command's own options that take a value. */
  values?: readonly string[];
  /** The command's own options without a value. */
  flags?: readonly string[];
  /** The option that carries the confidence level. Default "confidence" in every command (`pool`'s --level names grouping levels). */
  confidenceOption?: string;
}

const MODEL_OPTIONS = ["estimate", "se", "variance", "method", "test", "level", "format"];
const MODERATOR_OPTIONS = ["moderator", "categorical", "reference", "centre"];

/** The usage text of the shared options, for each command's help. */
export function poolingOptionsUsage(set: { moderators?: boolean; test?: boolean; confidenceOption?: string } = {}): string {
  const lines = [
    "Estimates",
    "  FILE.csv              comma-separated, one heading row, one estimate per row",
    "  --estimate COL        column of effect estimates",
    "  --se COL              column of standard errors, or",
    "  --variance COL        column of sampling variances (give exactly one of the two)",
    "",
    "Model",
    "  --method M            fe (common effect), dl (DerSimonian-Laird), reml (default), ml, pm",
    "                        (Paule-Mandel), he (Hedges), sj (Sidik-Jonkman)",
  ];
  if (set.test ?? true) lines.push("  --test T              z (Wald, default) or hksj (Knapp-Hartung: t and F on k - p df)");
  lines.push(`  ${`--${set.confidenceOption ?? "confidence"} L`.padEnd(22)}confidence level of every interval (default 0.95)`);
  if (set.moderators ?? true) {
    lines.push(
      "  --moderator COL       add a moderator (repeat for several): numeric when every value is a",
      "                        number, otherwise categorical (treatment contrasts, terms COL[level])",
      "  --categorical COL     treat a numeric-looking moderator as categorical",
      "  --reference COL=LEVEL reference level of a categorical moderator (default: first sorted)",
      "  --centre COL          centre a numeric moderator at its mean",
    );
  }
  lines.push("  --format F            table (default) or json");
  return lines.join("\n");
}

/** An invalid_input AppError pointing at the command's help. */
export function usageError(command: string, message: string, field = "arguments"): AppError {
  return new AppError("invalid_input", `${message} (see 'help ${command}')`, [{ field, message }]);
}

function keyValue(command: string, option: string, text: string): [string, string] {
  const at = text.indexOf("=");
  if (at <= 0) throw usageError(command, `--${option} needs COL=VALUE, got '${text}'`, option);
  return [text.slice(0, at), text.slice(at + 1)];
}

/**
 * Parses `args` of `command`: one positional FILE, the shared options and the command's own.
 * Throws AppError (invalid_input) for unknown, valueless or repeated options, a missing file or
 * estimate column, both or neither of --se and --variance, and bad method, test, level or format.
 * Example: parsePoolingArgs("bias", ["a.csv", "--estimate", "y", "--se", "s"]).pooling.method -> "reml".
 */
export function parsePoolingArgs(command: string, args: readonly string[], set: PoolingOptionSet = {}): ParsedPoolingArgs {
  const withModerators = set.moderators ?? true;
  const confidenceOption = set.confidenceOption ?? "confidence";
  const modelOptions = MODEL_OPTIONS.map((o) => (o === "level" ? confidenceOption : o));
  const known = new Set([...modelOptions.filter((o) => o !== "test" || (set.test ?? true)), ...(withModerators ? MODERATOR_OPTIONS : []), ...(set.values ?? [])]);
  const knownFlags = new Set(set.flags ?? []);
  const values = new Map<string, string[]>();
  const flags = new Set<string>();
  const positional: string[] = [];
  for (let i = 0; i < args.length; i += 1) {
    const arg = args[i]!;
    if (!arg.startsWith("--")) {
      positional.push(arg);
      continue;
    }
    const [name, inline] = arg.slice(2).split(/=(.*)/s, 2) as [string, string | undefined];
    if (knownFlags.has(name)) {
      if (inline !== undefined) throw usageError(command, `--${name} takes no value`, name);
      if (flags.has(name)) throw usageError(command, `--${name} is given more than once`, name);
      flags.add(name);
      continue;
    }
    if (!known.has(name)) throw usageError(command, `unknown option --${name}`, name);
    const value = inline ?? args[(i += 1)];
    if (value === undefined || (inline === undefined && value.startsWith("--"))) throw usageError(command, `--${name} needs a value`, name);
    values.set(name, [...(values.get(name) ?? []), value]);
  }
  const single = (name: string): string | undefined => {
    const given = values.get(name);
    if (given && given.length > 1) throw usageError(command, `--${name} is given more than once`, name);
    return given?.[0];
  };
  if (positional.length !== 1) throw usageError(command, positional.length === 0 ? "give the CSV file of estimates" : `one file at a time, got ${positional.join(", ")}`, "file");
  const estimate = single("estimate");
  if (!estimate) throw usageError(command, "--estimate COL is required", "estimate");
  const se = single("se");
  const variance = single("variance");
  if ((se === undefined) === (variance === undefined)) throw usageError(command, "give exactly one of --se COL and --variance COL", "se");
  const method = (single("method") ?? "reml") as Tau2Method;
  if (!TAU2_METHODS.includes(method)) throw usageError(command, `--method must be one of ${TAU2_METHODS.join(", ")}, got '${method}'`, "method");
  const test = (single("test") ?? "z") as InferenceTest;
  if (!INFERENCE_TESTS.includes(test)) throw usageError(command, `--test must be one of ${INFERENCE_TESTS.join(", ")}, got '${test}'`, "test");
  const format = single("format") ?? "table";
  if (format !== "table" && format !== "json") throw usageError(command, `--format must be table or json, got '${format}'`, "format");
  const levelText = single(confidenceOption);
  const level = levelText === undefined ? 0.95 : Number(levelText);
  if (!(level > 0 && level < 1)) throw usageError(command, `--${confidenceOption} must be a number between 0 and 1, got '${levelText}'`, confidenceOption);
  const moderators = values.get("moderator") ?? [];
  const duplicate = moderators.find((name, index) => moderators.indexOf(name) !== index);
  if (duplicate) throw usageError(command, `moderator '${duplicate}' is given twice`, "moderator");
  const references = new Map((values.get("reference") ?? []).map((text) => keyValue(command, "reference", text)));
  const categorical = new Set(values.get("categorical") ?? []);
  const centre = new Set(values.get("centre") ?? []);
  for (const [option, names] of [["categorical", categorical], ["reference", references.keys()], ["centre", centre]] as const) {
    for (const name of names) if (!moderators.includes(name)) throw usageError(command, `--${option} names '${name}', which is not a --moderator`, option);
  }
  return {
    pooling: { command, file: positional[0]!, estimate, se, variance, method, test, level, moderators, categorical, references, centre, format },
    values,
    single,
    flags,
  };
}

/** A key=value option (--predict-at COL=VAL) as a map. Throws AppError for a value without '='. */
export function keyValueOption(command: string, option: string, values: readonly string[] | undefined): Map<string, string> {
  return new Map((values ?? []).map((text) => keyValue(command, option, text)));
}

/** The moderator specifications of the table's columns, coded as `pool` codes them. */
export function moderatorSpecs(table: CsvTable, args: PoolingArgs): ModeratorSpec[] {
  return args.moderators.map((name): ModeratorSpec => {
    requireValues(table, name);
    const categorical = args.categorical.has(name) || args.references.has(name) || !isNumericColumn(table, name);
    if (categorical) {
      if (args.centre.has(name)) throw usageError(args.command, `--centre applies to numeric moderators; '${name}' is categorical`, "centre");
      return { kind: "categorical", name, values: textColumn(table, name), reference: args.references.get(name) };
    }
    return { kind: "numeric", name, values: numericColumn(table, name), centre: args.centre.has(name) };
  });
}

/** Model input errors as application errors that point at the file, row and column. */
export function poolingInputError(error: unknown, table: CsvTable, args: PoolingArgs): unknown {
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

export interface PoolingInput {
  data: MetaData;
  specs: ModeratorSpec[];
  /** The moderators' design, or undefined without moderators. */
  moderators: ModeratorDesign | undefined;
}

/**
 * The model input from the table: estimates with their variances (or SEs) and the moderators.
 * Throws AppError naming the file, row and column of a bad cell; ModelInputError (StudyInputError)
 * for invalid values, to be passed through poolingInputError by the caller.
 */
export function readPoolingInput(table: CsvTable, args: PoolingArgs): PoolingInput {
  const estimates = numericColumn(table, args.estimate);
  const spread = numericColumn(table, (args.se ?? args.variance)!);
  const data = metaData(args.se ? { estimates, standardErrors: spread } : { estimates, variances: spread });
  const specs = moderatorSpecs(table, args);
  return { data, specs, moderators: specs.length > 0 ? moderatorDesign(data.k, specs) : undefined };
}

/** A text column every row must fill (labels, groups), or undefined when no column is named. */
export function requiredTextColumn(table: CsvTable, name: string | undefined): string[] | undefined {
  if (name === undefined) return undefined;
  requireValues(table, name);
  return textColumn(table, name);
}

/**
 * Reads the table of `args.file`, builds the model input and runs `compute` on it; model input
 * errors from either step come back as AppErrors naming the file, row and column.
 */
export function withPoolingInput<T>(args: PoolingArgs, compute: (input: PoolingInput, table: CsvTable) => T): T {
  const table = readCsvTable(args.file);
  try {
    return compute(readPoolingInput(table, args), table);
  } catch (error) {
    throw poolingInputError(error, table, args);
  }
}

/** The model options the arguments ask for (method, test, level, moderators' design). */
export function fitOptionsOf(args: PoolingArgs, input: PoolingInput): { method: Tau2Method; test: InferenceTest; confidenceLevel: number; design: ModeratorDesign["design"] | undefined } {
  return { method: args.method, test: args.test, confidenceLevel: args.level, design: input.moderators?.design };
}
