import { AppError } from "../errors/app-error";

/**
 * Command-line arguments split into positional arguments and --name value options (also
 * --name=value). Only the names in `known` are accepted; each may be given once.
 * Throws AppError invalid_input naming the unknown, repeated or valueless option.
 * Example: readOptions(["a.csv", "--seed", "4"], "estimate", ["seed"]) -> { positional: ["a.csv"], options: Map { seed: "4" } }.
 */
export function readOptions(args: readonly string[], command: string, known: readonly string[]): { positional: string[]; options: Map<string, string> } {
  const positional: string[] = [];
  const options = new Map<string, string>();
  const fail = (message: string, field: string) => new AppError("invalid_input", `${message} (see 'help ${command}')`, [{ field, message }]);
  for (let i = 0; i < args.length; i += 1) {
    const arg = args[i]!;
    if (!arg.startsWith("--")) {
      positional.push(arg);
      continue;
    }
    const equals = arg.indexOf("=");
    const name = equals > 0 ? arg.slice(2, equals) : arg.slice(2);
    if (!known.includes(name)) throw fail(`unknown option --${name}`, name);
    const value = equals > 0 ? arg.slice(equals + 1) : args[(i += 1)];
    if (value === undefined || (equals < 0 && value.startsWith("--"))) throw fail(`--${name} needs a value`, name);
    if (options.has(name)) throw fail(`--${name} is given more than once`, name);
    options.set(name, value);
  }
  return { positional, options };
}

/** A whole-number option within [min, max], or `fallback` when absent. Throws AppError invalid_input otherwise. */
export function integerOption(options: Map<string, string>, name: string, fallback: number, min: number, max: number): number {
  const text = options.get(name);
  if (text === undefined) return fallback;
  const value = Number(text);
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new AppError("invalid_input", `--${name} must be a whole number from ${min} to ${max}, got '${text}'`, [{ field: name, message: `not a whole number from ${min} to ${max}` }]);
  }
  return value;
}

/** One of `choices`, or the first choice when absent. Throws AppError invalid_input otherwise. */
export function choiceOption<T extends string>(options: Map<string, string>, name: string, choices: readonly T[]): T {
  const text = options.get(name) ?? choices[0]!;
  if (!(choices as readonly string[]).includes(text)) {
    throw new AppError("invalid_input", `--${name} must be one of ${choices.join(", ")}, got '${text}'`, [{ field: name, message: `must be one of ${choices.join(", ")}` }]);
  }
  return text as T;
}

/** Rows of plain cells as an aligned text table with a heading row. */
export function formatTextTable(headings: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = headings.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j]!.length)));
  return [headings, ...rows].map((r) => r.map((cell, j) => cell.padEnd(widths[j]!)).join("  ").trimEnd()).join("\n") + "\n";
}
