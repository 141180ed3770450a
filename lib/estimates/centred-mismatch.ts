/**
 * The broods a site's mismatch models use, with each brood's mismatch and its within-year
 * deviation: the shared first step of the estimates and of the site diagnostics, so both read
 * the same definitions.
 *
 * References:
 * - van de Pol, M. & Wright, J. (2009). Animal Behaviour 77: 753-758 (within-subject centring).
 * - Visser, M. E., te Marvelde, L. & Lof, M. E. (2012). J. Ornithol. 153 (Suppl 1): S75-S84 (mismatch).
 *
 * A brood is usable when its year has a food-peak date (and, for hatch-date mismatch, it has a
 * hatch date). mismatch = date + offset - food peak (mismatch.ts); c = mismatch - the mean
 * mismatch of the usable broods of its site-year; that mean is the year's annual mean mismatch.
 */
import type { BroodForEstimates } from "./estimate-types";
import { broodMismatch, type MismatchDefinition } from "./mismatch";
import { centreWithinGroups, type CentredPredictor } from "./within-year-centring";

export interface CentredMismatch {
  /** The usable broods, in input order. */
  readonly usable: readonly BroodForEstimates[];
  /** Mismatch (days) of each usable brood. */
  readonly mismatch: Float64Array;
  /** Year of each usable brood. */
  readonly yearOf: Int32Array;
  /** c = within-year mismatch, and the annual mean mismatch by year. */
  readonly centred: CentredPredictor;
  /** Years in ascending order with at least one usable brood. */
  readonly yearsUsed: readonly number[];
  /** Years with broods but no food-peak date (their broods are not usable), ascending. */
  readonly yearsWithoutFoodPeak: readonly number[];
  /** Broods left out for lack of a hatch date (hatch-date mismatch only). */
  readonly broodsWithoutHatchDate: number;
}

/**
 * Selects the usable broods and computes mismatch and within-year mismatch.
 * Input: broods with day-of-year dates, food peaks by year, the mismatch definition.
 * Returns the usable broods with their values (possibly none). Never throws for data.
 * Example: broods of 2001 laid on days 100 and 104 with the peak on day 135 and offset 30 have
 * mismatch -5 and -1, c -2 and 2, annual mean mismatch -3.
 */
export function centredMismatch(broods: readonly BroodForEstimates[], foodPeaks: ReadonlyMap<number, number>, definition: MismatchDefinition): CentredMismatch {
  const usable: BroodForEstimates[] = [];
  const noPeak = new Set<number>();
  let noHatch = 0;
  for (const brood of broods) {
    if (!foodPeaks.has(brood.year)) noPeak.add(brood.year);
    else if (definition.basis === "hatch_date" && brood.hatchDateDoy === null) noHatch += 1;
    else usable.push(brood);
  }
  const mismatch = new Float64Array(usable.length);
  const yearOf = new Int32Array(usable.length);
  for (let i = 0; i < usable.length; i += 1) {
    mismatch[i] = broodMismatch(definition, usable[i]!, foodPeaks.get(usable[i]!.year)!);
    yearOf[i] = usable[i]!.year;
  }
  const centred = centreWithinGroups(mismatch, yearOf);
  return {
    usable,
    mismatch,
    yearOf,
    centred,
    yearsUsed: [...centred.groupMeans.keys()].sort((a, b) => a - b),
    yearsWithoutFoodPeak: [...noPeak].sort((a, b) => a - b),
    broodsWithoutHatchDate: noHatch,
  };
}
