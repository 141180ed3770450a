/**
 * Text-table pieces shared by the sensitivity and small-study commands: numbers, intervals, the
 * model line and the warnings block, in one style.
 */
import { formatPValue, formatSignificant } from "../format/numbers";
import type { MetaModelResult } from "../stats/meta/meta-result";
import type { StatWarning } from "../stats/warnings";

/** A number to 4 significant digits. */
export const num = (value: number): string => formatSignificant(value, 4);

/** A p-value ("< 0.001" below that). */
export const pText = (value: number): string => formatPValue(value);

/** "p = 0.189" or "p < 0.001". */
export const pEquals = (value: number): string => {
  const text = formatPValue(value);
  return text.startsWith("<") ? `p ${text}` : `p = ${text}`;
};

/** "[lower, upper]". */
export const interval = (lower: number, upper: number): string => `[${num(lower)}, ${num(upper)}]`;

/** I^2 in percent with one decimal. */
export const percent = (value: number): string => `${value.toFixed(1)}%`;

/** The confidence level as a percentage label, e.g. "95%". */
export const levelLabel = (level: number): string => `${Math.round(level * 1000) / 10}%`;

/** One line naming the model: method, test, k and p. */
export function modelLine(fit: MetaModelResult, file: string): string {
  const kind = fit.method.method === "fe" ? "common-effect model" : `random-effects model, tau^2 by ${fit.method.name}`;
  const terms = fit.p === 1 ? "" : ` with moderators (${fit.coefficients.slice(1).map((c) => c.term).join(", ")})`;
  return `${file}: ${fit.k} estimates; ${kind}${terms}; ${fit.test.name} test; ${levelLabel(fit.confidenceLevel)} intervals`;
}

/** The numbered warnings block (empty when there are none). */
export function warningLines(warnings: readonly StatWarning[]): string[] {
  if (warnings.length === 0) return [];
  return ["", "Warnings", ...warnings.map((w, i) => `  ${i + 1}. ${w.message} [${w.code}]`)];
}
