/**
 * The demo network simulator: invented sites, simulated birds, deterministic from one seed.
 * Pure (no database, no files). Each site draws from its own streams derived from the seed, so a
 * site's data do not depend on how many draws another site made.
 */
import { createRandomStream, deriveSeed } from "../../lib/stats/random/xoshiro128";
import { simulateBroodDrafts } from "./broods";
import { simulateUploadedEstimates, UPLOADED_OUTCOMES } from "./estimates-only";
import { simulateOutcomes } from "./outcomes";
import { drawSiteParameters } from "./site-parameters";
import { simulateSiteYears } from "./site-years";
import { drawSite, drawStratifiedSlots, SITE_CATALOGUE } from "./sites";
import { SPECIES, speciesParameters } from "./species";
import { estimatesOnlySiteTruth, networkTruth, rawSiteTruth } from "./truth";
import type { NetworkTruth, SimulatedNetwork, SimulatedSiteData, SiteTruth } from "./types";
import { demoUsers } from "./users";

export type * from "./types";

/** The seed `npm run seed` uses when none is given. */
export const DEFAULT_DEMO_SEED = 2026;

/** Stream indices: one for the network, then per site (catalogue position k) one for parameters, one for data. */
const NETWORK_STREAM = 0;
const SITE_PARAMETER_STREAM = 1000;
const SITE_DATA_STREAM = 2000;

export interface SimulateNetworkOptions {
  /** A non-negative safe integer. */
  seed: number;
  /**
   * Only these catalogue sites (default: all). Each site draws from its own streams, so a site's
   * data are the same as in the full network; tests use this for quick small networks.
   */
  siteCodes?: readonly string[];
}

/**
 * Simulates the whole demo network. The same seed gives identical output on every run.
 * Throws RangeError for a seed that is not a non-negative safe integer.
 * Example: simulateNetwork({ seed: 2026 }).truth.sites[0].withinYear.fledging_failure.linear.generating
 */
export function simulateNetwork({ seed, siteCodes }: SimulateNetworkOptions): SimulatedNetwork {
  if (!Number.isSafeInteger(seed) || seed < 0) throw new RangeError(`seed must be a non-negative whole number, got ${seed}`);
  const unknown = (siteCodes ?? []).filter((code) => !SITE_CATALOGUE.some((entry) => entry.code === code));
  if (unknown.length) throw new RangeError(`not demo site codes: ${unknown.join(", ")}`);
  const included = (code: string) => siteCodes === undefined || siteCodes.includes(code);
  const networkRandom = createRandomStream(deriveSeed(seed, NETWORK_STREAM));
  const slots = drawStratifiedSlots(networkRandom, SITE_CATALOGUE.length);
  const sites: SimulatedSiteData[] = [];
  const siteTruths: SiteTruth[] = [];
  const diagnostics: NetworkTruth["diagnostics"] = {
    broods: 0,
    layDatesClamped: 0,
    fledgingProbabilityCapped: 0,
    zeroFledglingRedraws: 0,
    recruitmentProbabilityCapped: 0,
  };

  SITE_CATALOGUE.forEach((entry, k) => {
    if (!included(entry.code)) return;
    const parameterRandom = createRandomStream(deriveSeed(seed, SITE_PARAMETER_STREAM + k));
    const dataRandom = createRandomStream(deriveSeed(seed, SITE_DATA_STREAM + k));
    const species = speciesParameters(entry.speciesKey);
    const site = drawSite(
      entry,
      { latitudeSlot: slots.latitudeSlot[k]!, warmingSlot: slots.warmingSlot[k]!, count: SITE_CATALOGUE.length },
      parameterRandom,
      seed,
    );
    const parameters = drawSiteParameters(site, species, parameterRandom);
    if (site.contribution === "estimates_only") {
      const uploadedEstimates = simulateUploadedEstimates(site, parameters, species, dataRandom);
      sites.push({ site, siteYears: [], broods: [], uploadedEstimates });
      siteTruths.push(estimatesOnlySiteTruth(site, parameters, UPLOADED_OUTCOMES[site.code]!));
      return;
    }
    const years = simulateSiteYears(site, parameters, dataRandom);
    const drafts = simulateBroodDrafts(site.code, years, parameters, species, dataRandom);
    const outcomes = simulateOutcomes(years, drafts.broodsByYear, parameters, species, dataRandom);
    sites.push({ site, siteYears: years.map((y) => y.covariates), broods: outcomes.broods, uploadedEstimates: [] });
    siteTruths.push(rawSiteTruth(site, parameters, outcomes));
    diagnostics.broods += outcomes.broods.length;
    diagnostics.layDatesClamped += drafts.layDatesClamped;
    diagnostics.fledgingProbabilityCapped += outcomes.fledgingProbabilityCapped;
    diagnostics.zeroFledglingRedraws += outcomes.zeroFledglingRedraws;
    diagnostics.recruitmentProbabilityCapped += outcomes.recruitmentProbabilityCapped;
  });

  return {
    seed,
    species: SPECIES.map(({ key, scientificName, commonName }) => ({ key, scientificName, commonName })),
    users: demoUsers(SITE_CATALOGUE.filter((entry) => included(entry.code))),
    sites,
    truth: networkTruth(seed, siteTruths, diagnostics),
  };
}
