/**
 * The broods of one site, year by year, before their outcomes: which females breed (one brood
 * each; some return from the year before), when each lays, how many eggs, when they hatch.
 *
 *   layDate_i = round(meanLay_y + femaleDeviation_f + Normal(0, residualSd)), kept in 90..170
 *   clutch_i  = round(Normal(siteClutchMean, species clutchSd)), kept in the species range
 *               (independent of laying date, so the fledgling model's log-link slope stays clean)
 *   hatch_i   = layDate_i + clutch_i - 1 + incubation + 0..2 days; missing for about 3% of broods
 */
import type { RandomStream } from "../../lib/stats/random/xoshiro128";
import { bernoulli, clamp, normal, permutation } from "./draws";
import { ENVIRONMENT } from "./parameters";
import type { SiteParameters } from "./site-parameters";
import type { SimulatedYearClimate } from "./site-years";
import type { SpeciesParameters } from "./species";

/** A brood before its outcomes are drawn. */
export interface BroodDraft {
  femaleId: string;
  layDateDoy: number;
  clutchSize: number;
  hatchDateDoy: number | null;
}

interface Female {
  id: string;
  layDeviation: number;
}

const MISSING_HATCH_DATE_SHARE = 0.03;

export interface SiteBroodDrafts {
  /** broodsByYear[k] are the broods of the k-th simulated year, ordered by female id. */
  broodsByYear: BroodDraft[][];
  layDatesClamped: number;
}

export function simulateBroodDrafts(
  siteCode: string,
  years: readonly SimulatedYearClimate[],
  parameters: SiteParameters,
  species: SpeciesParameters,
  random: RandomStream,
): SiteBroodDrafts {
  const residualSd = Math.sqrt(species.withinYearLayDateSd ** 2 - species.femaleLayDateSd ** 2);
  const [minLay, maxLay] = ENVIRONMENT.layDateRangeDoy;
  const [minClutch, maxClutch] = species.clutchRange;
  let femalesRinged = 0;
  let layDatesClamped = 0;
  let lastYearBreeders: Female[] = [];
  const broodsByYear: BroodDraft[][] = [];
  for (const { covariates, latentMeanLayDoy } of years) {
    const returning = lastYearBreeders.filter(() => bernoulli(random, species.annualFemaleReturn));
    const breeders: Female[] =
      returning.length > covariates.broodCount
        ? permutation(random, returning.length)
            .slice(0, covariates.broodCount)
            .map((i) => returning[i]!)
        : returning;
    while (breeders.length < covariates.broodCount) {
      femalesRinged += 1;
      breeders.push({ id: `${siteCode}-F${String(femalesRinged).padStart(5, "0")}`, layDeviation: normal(random, 0, species.femaleLayDateSd) });
    }
    breeders.sort((a, b) => (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
    const broods = breeders.map((female): BroodDraft => {
      const unclamped = Math.round(latentMeanLayDoy + female.layDeviation + normal(random, 0, residualSd));
      const layDateDoy = clamp(unclamped, minLay, maxLay);
      if (layDateDoy !== unclamped) layDatesClamped += 1;
      const clutchSize = clamp(Math.round(normal(random, parameters.clutchMean, species.clutchSd)), minClutch, maxClutch);
      const hatchDateDoy = bernoulli(random, MISSING_HATCH_DATE_SHARE)
        ? null
        : layDateDoy + clutchSize - 1 + species.incubationDays + random.nextInt(3);
      return { femaleId: female.id, layDateDoy, clutchSize, hatchDateDoy };
    });
    broodsByYear.push(broods);
    lastYearBreeders = breeders;
  }
  return { broodsByYear, layDatesClamped };
}
