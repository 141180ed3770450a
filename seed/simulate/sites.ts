/**
 * The demo network's sites. Names, codes, leads, species and habitat are fixed (invented; no real
 * place or study); location, climate trend and study span are drawn from the seed. Latitudes and
 * warming rates are stratified across the network (one site per equal-width slice, in a random
 * order) so every seed covers the whole range and the two are unrelated to each other.
 */
import type { RandomStream } from "../../lib/stats/random/xoshiro128";
import { permutation, roundTo, uniform } from "./draws";
import { ENVIRONMENT } from "./parameters";
import type { SiteContribution, SimulatedSite, SpeciesKey } from "./types";

export interface SiteCatalogueEntry {
  code: string;
  name: string;
  speciesKey: SpeciesKey;
  contribution: SiteContribution;
  habitat: "deciduous" | "mixed" | "coniferous" | "urban_park";
  leadName: string;
}

export const SITE_CATALOGUE: readonly SiteCatalogueEntry[] = [
  { code: "QLM", name: "Quillmere Wood", speciesKey: "great_tit", contribution: "brood_records", habitat: "deciduous", leadName: "Maren Oskeby" },
  { code: "HRF", name: "Harrowfen Beeches", speciesKey: "great_tit", contribution: "brood_records", habitat: "deciduous", leadName: "Tobiah Quennell" },
  { code: "KST", name: "Kestrafell Oaks", speciesKey: "great_tit", contribution: "brood_records", habitat: "deciduous", leadName: "Ilse Varrowick" },
  { code: "LND", name: "Lunderhope Park", speciesKey: "great_tit", contribution: "brood_records", habitat: "urban_park", leadName: "Casimir Dunmoreth" },
  { code: "MRV", name: "Moravelle Forest", speciesKey: "great_tit", contribution: "brood_records", habitat: "mixed", leadName: "Signe Halvorick" },
  { code: "ORL", name: "Orlanmoor Wood", speciesKey: "great_tit", contribution: "brood_records", habitat: "mixed", leadName: "Lucan Petterfeld" },
  { code: "PRD", name: "Pirrendal Grove", speciesKey: "great_tit", contribution: "brood_records", habitat: "deciduous", leadName: "Odile Brackwater" },
  { code: "SLQ", name: "Sallowquay Copse", speciesKey: "great_tit", contribution: "estimates_only", habitat: "mixed", leadName: "Joran Mistlowe" },
  { code: "THV", name: "Thornavik Birches", speciesKey: "blue_tit", contribution: "brood_records", habitat: "mixed", leadName: "Wenna Kailholm" },
  { code: "WND", name: "Wendlecombe Oaks", speciesKey: "blue_tit", contribution: "brood_records", habitat: "deciduous", leadName: "Aurel Stennavard" },
  { code: "ZNH", name: "Zennerholt Forest", speciesKey: "blue_tit", contribution: "brood_records", habitat: "deciduous", leadName: "Petra Ombrelli" },
  { code: "GLD", name: "Glimmerdown Park", speciesKey: "blue_tit", contribution: "brood_records", habitat: "urban_park", leadName: "Hollis Verrand" },
  { code: "ASC", name: "Ashcoven Wood", speciesKey: "blue_tit", contribution: "brood_records", habitat: "mixed", leadName: "Nadia Quorvath" },
  { code: "BRM", name: "Brindlemoss Hollow", speciesKey: "blue_tit", contribution: "brood_records", habitat: "deciduous", leadName: "Emeric Tollansby" },
  { code: "VRL", name: "Verrilund Woods", speciesKey: "blue_tit", contribution: "estimates_only", habitat: "deciduous", leadName: "Freya Lindmorrow" },
  { code: "CRW", name: "Corrowdene Pinewood", speciesKey: "pied_flycatcher", contribution: "brood_records", habitat: "coniferous", leadName: "Bastien Ulvercombe" },
  { code: "ELV", name: "Eilvaran Forest", speciesKey: "pied_flycatcher", contribution: "brood_records", habitat: "mixed", leadName: "Keira Vashollow" },
  { code: "DRV", name: "Dravnessa Woods", speciesKey: "pied_flycatcher", contribution: "brood_records", habitat: "deciduous", leadName: "Ansel Drummerick" },
  { code: "FNM", name: "Fennimarch Wood", speciesKey: "pied_flycatcher", contribution: "brood_records", habitat: "coniferous", leadName: "Liesl Farnquist" },
  { code: "HLT", name: "Hollentarn Birches", speciesKey: "pied_flycatcher", contribution: "brood_records", habitat: "mixed", leadName: "Tavish Morrendal" },
  { code: "YSK", name: "Yskelund Grove", speciesKey: "pied_flycatcher", contribution: "estimates_only", habitat: "coniferous", leadName: "Greta Solvanick" },
  { code: "MST", name: "Mistravale Oaks", speciesKey: "collared_flycatcher", contribution: "brood_records", habitat: "deciduous", leadName: "Ivo Kettlebrand" },
  { code: "NRD", name: "Norrandel Forest", speciesKey: "collared_flycatcher", contribution: "brood_records", habitat: "mixed", leadName: "Runa Pellacott" },
  { code: "TML", name: "Tamsgarth Woods", speciesKey: "collared_flycatcher", contribution: "brood_records", habitat: "deciduous", leadName: "Cyprian Wexmoor" },
  { code: "PLR", name: "Pelleth Ridge", speciesKey: "collared_flycatcher", contribution: "estimates_only", habitat: "mixed", leadName: "Dagny Orvellan" },
];

/** The example.org address of an invented person: "Maren Oskeby" -> maren.oskeby@example.org. */
export function demoEmail(displayName: string): string {
  return `${displayName.toLowerCase().replace(/[^a-z]+/g, ".")}@example.org`;
}

/**
 * The stratified latitude and warming-rate slots: slot k of n covers [k/n, (k+1)/n) of the range.
 * Drawn once for the whole network from `networkRandom`.
 */
export function drawStratifiedSlots(networkRandom: RandomStream, count: number): { latitudeSlot: number[]; warmingSlot: number[] } {
  return { latitudeSlot: permutation(networkRandom, count), warmingSlot: permutation(networkRandom, count) };
}

/** A site's seed-dependent attributes: location, warming rate, study span. */
export function drawSite(
  entry: SiteCatalogueEntry,
  slots: { latitudeSlot: number; warmingSlot: number; count: number },
  random: RandomStream,
  seed: number,
): SimulatedSite {
  const [latLow, latHigh] = ENVIRONMENT.latitudeRange;
  const [warmLow, warmHigh] = ENVIRONMENT.warmingRateRangeCPerDecade;
  const latitude = roundTo(latLow + ((latHigh - latLow) * (slots.latitudeSlot + random.nextFloat())) / slots.count, 4);
  const warmingRateCPerDecade = roundTo(warmLow + ((warmHigh - warmLow) * (slots.warmingSlot + random.nextFloat())) / slots.count, 3);
  const longitude = roundTo(uniform(random, ...ENVIRONMENT.longitudeRange), 4);
  const elevationM = Math.round(uniform(random, ...ENVIRONMENT.elevationRangeM));
  const [minYears, maxYears] = ENVIRONMENT.studyYearsRange;
  const [firstLast, lastLast] = ENVIRONMENT.lastYearRange;
  const studyYears = minYears + random.nextInt(maxYears - minYears + 1);
  const lastYear = firstLast + random.nextInt(lastLast - firstLast + 1);
  return {
    code: entry.code,
    name: entry.name,
    speciesKey: entry.speciesKey,
    contribution: entry.contribution,
    latitude: Math.min(latitude, latHigh),
    longitude,
    elevationM,
    habitat: entry.habitat,
    firstYear: lastYear - studyYears + 1,
    lastYear,
    leadEmail: demoEmail(entry.leadName),
    notes: `Demo network: an invented site with simulated birds (seed ${seed}). ${
      entry.contribution === "estimates_only" ? "Shares its own per-year estimates only, no brood records." : "Shares raw brood records."
    }`,
    warmingRateCPerDecade: Math.min(warmingRateCPerDecade, warmHigh),
  };
}
