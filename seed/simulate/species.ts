/**
 * The demo network's species and their life-history parameters. The species are real; the
 * numbers are round, plausible values chosen for the simulation, not estimates from any study.
 */
import type { SimulatedSpecies, SpeciesKey } from "./types";

export interface SpeciesParameters extends SimulatedSpecies {
  clutchMean: number;
  clutchSd: number;
  clutchRange: [number, number];
  /** Days from the last egg to hatching. */
  incubationDays: number;
  /** Within-year standard deviation of lay dates, days (female part plus residual). */
  withinYearLayDateSd: number;
  /** Standard deviation of a female's own repeatable lay-date deviation, days. */
  femaleLayDateSd: number;
  /** Mismatch at a site's baseline temperature, days (migrants arrive late, so theirs is larger). */
  baselineMismatchDays: number;
  /** Population mean lay-date change per degree C of spring temperature, days. */
  layDateDaysPerDegree: number;
  /** Probability a breeding female returns to breed the next year. */
  annualFemaleReturn: number;
  /** Chance that each further fledgling of a recruiting brood also recruits. */
  extraRecruitProbability: number;
}

export const SPECIES: readonly SpeciesParameters[] = [
  {
    key: "great_tit",
    scientificName: "Parus major",
    commonName: "Great tit",
    clutchMean: 8.6,
    clutchSd: 1.5,
    clutchRange: [4, 13],
    incubationDays: 13,
    withinYearLayDateSd: 6,
    femaleLayDateSd: 3,
    baselineMismatchDays: 2,
    layDateDaysPerDegree: -2.5,
    annualFemaleReturn: 0.45,
    extraRecruitProbability: 0.04,
  },
  {
    key: "blue_tit",
    scientificName: "Cyanistes caeruleus",
    commonName: "Eurasian blue tit",
    clutchMean: 9.8,
    clutchSd: 1.7,
    clutchRange: [5, 15],
    incubationDays: 14,
    withinYearLayDateSd: 5.5,
    femaleLayDateSd: 2.8,
    baselineMismatchDays: 0,
    layDateDaysPerDegree: -2.8,
    annualFemaleReturn: 0.4,
    extraRecruitProbability: 0.035,
  },
  {
    key: "pied_flycatcher",
    scientificName: "Ficedula hypoleuca",
    commonName: "European pied flycatcher",
    clutchMean: 6.3,
    clutchSd: 0.9,
    clutchRange: [3, 8],
    incubationDays: 14,
    withinYearLayDateSd: 4.5,
    femaleLayDateSd: 2.2,
    baselineMismatchDays: 6,
    layDateDaysPerDegree: -1.2,
    annualFemaleReturn: 0.5,
    extraRecruitProbability: 0.03,
  },
  {
    key: "collared_flycatcher",
    scientificName: "Ficedula albicollis",
    commonName: "Collared flycatcher",
    clutchMean: 6,
    clutchSd: 0.9,
    clutchRange: [3, 8],
    incubationDays: 13,
    withinYearLayDateSd: 4.5,
    femaleLayDateSd: 2.2,
    baselineMismatchDays: 5,
    layDateDaysPerDegree: -1.5,
    annualFemaleReturn: 0.5,
    extraRecruitProbability: 0.03,
  },
];

export function speciesParameters(key: SpeciesKey): SpeciesParameters {
  const found = SPECIES.find((s) => s.key === key);
  if (!found) throw new Error(`unknown species ${key}`);
  return found;
}
