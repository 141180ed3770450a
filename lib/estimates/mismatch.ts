/**
 * Phenological mismatch of a brood with its food peak, in days (late broods positive).
 *
 * References:
 * - Visser, M. E., te Marvelde, L. & Lof, M. E. (2012). Adaptive phenological mismatches of birds
 *   and their food in a warming world. Journal of Ornithology 153 (Suppl 1): S75-S84.
 * - Reed, T. E., Jenouvrier, S. & Visser, M. E. (2013). Phenological mismatch strongly affects
 *   individual fitness but not population demography in a woodland passerine. Journal of Animal
 *   Ecology 82: 131-144.
 *
 * From the lay date: mismatch = lay date + offset - food-peak date. The offset (network setting,
 * default 30 days) is common practice, from memory: about 9 days of laying, 12 of incubation and 9
 * to the nestlings' peak demand. From the hatch date: mismatch = hatch date + nestling age at peak
 * demand (default 9 days) - food-peak date. All dates are days of year (1 = 1 January).
 */
export type MismatchBasis = "lay_date" | "hatch_date";

/** Default lay-date offset, days (network setting "mismatch_offset_days" overrides it). */
export const DEFAULT_MISMATCH_OFFSET_DAYS = 30;
/** Default nestling age at peak food demand, days, for hatch-date mismatch. */
export const DEFAULT_NESTLING_AGE_AT_PEAK_DEMAND_DAYS = 9;

export interface MismatchDefinition {
  readonly basis: MismatchBasis;
  /** Days added to the lay date (basis lay_date) or to the hatch date (basis hatch_date). */
  readonly offsetDays: number;
}

/**
 * Mismatch in days of one brood. Input: day-of-year dates; for basis hatch_date a hatch date must
 * be given. Returns the date + offset - food peak. Throws RangeError when the basis date is missing.
 * Example: broodMismatch({ basis: "lay_date", offsetDays: 30 }, { layDateDoy: 110, hatchDateDoy: null }, 135) === 5.
 */
export function broodMismatch(
  definition: MismatchDefinition,
  brood: { layDateDoy: number; hatchDateDoy: number | null },
  foodPeakDoy: number,
): number {
  if (definition.basis === "lay_date") return brood.layDateDoy + definition.offsetDays - foodPeakDoy;
  if (brood.hatchDateDoy === null) throw new RangeError("hatch-date mismatch needs the brood's hatch date");
  return brood.hatchDateDoy + definition.offsetDays - foodPeakDoy;
}

/** The definition in words, for method text. Example: "mismatch = lay date + 30 d - food-peak date". */
export function describeMismatch(definition: MismatchDefinition): string {
  const date = definition.basis === "lay_date" ? "lay date" : "hatch date";
  const offset = definition.basis === "lay_date" ? "offset" : "nestling age at peak demand";
  return `mismatch (days) = ${date} + ${definition.offsetDays} d (${offset}) - food-peak date of the site-year; late broods have positive mismatch`;
}
