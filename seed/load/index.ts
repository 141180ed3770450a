/**
 * Loads a simulated network into an empty database: reference rows (species, accounts, sites,
 * moderators) in one transaction, then each site's files through the same submission path as a
 * real upload (validated, one transaction per submission, SHA-256 of the file's bytes).
 */
import type { Db } from "../../lib/db/client";
import { updateNetworkSettings } from "../../lib/settings/network-settings";
import type { SimulatedNetwork } from "../simulate/types";
import { loadBroodRecords } from "./brood-records";
import { loadUploadedEstimates } from "./estimates";
import { loadModerators } from "./moderators";
import { loadSiteYears } from "./site-years";
import { loadSites } from "./sites";
import { loadSpecies } from "./species";
import { loadUsers } from "./users";

export interface LoadSummary {
  species: number;
  users: number;
  sites: number;
  broodRecordSites: number;
  estimatesOnlySites: number;
  moderatorValues: number;
  siteYears: number;
  broodRecords: number;
  uploadedEstimates: number;
  submissions: number;
}

export interface LoadOptions {
  /** Password hashes by email; accounts without one cannot sign in. */
  passwordHashes?: ReadonlyMap<string, string>;
}

/**
 * Writes `network` into `db`, which must hold no sites, species or demo accounts (the caller
 * checks and clears). Throws AppError invalid_input if a simulated file fails upload validation.
 */
export async function loadNetwork(db: Db, network: SimulatedNetwork, options: LoadOptions = {}): Promise<LoadSummary> {
  const sites = network.sites.map((s) => s.site);
  const reference = await db.$transaction(
    async (tx) => {
      const speciesIds = await loadSpecies(tx, network.species);
      const userIds = await loadUsers(tx, network.users, options.passwordHashes);
      const siteIds = await loadSites(tx, sites, speciesIds, userIds);
      const moderatorValues = await loadModerators(tx, sites, siteIds);
      return { userIds, moderatorValues };
    },
    { timeout: 60_000, maxWait: 60_000 },
  );
  const summary: LoadSummary = {
    species: network.species.length,
    users: network.users.length,
    sites: sites.length,
    broodRecordSites: sites.filter((s) => s.contribution === "brood_records").length,
    estimatesOnlySites: sites.filter((s) => s.contribution === "estimates_only").length,
    moderatorValues: reference.moderatorValues,
    siteYears: 0,
    broodRecords: 0,
    uploadedEstimates: 0,
    submissions: 0,
  };
  for (const data of network.sites) {
    const leadId = reference.userIds.get(data.site.leadEmail)!;
    const siteYears = await loadSiteYears(db, data, leadId);
    const broods = await loadBroodRecords(db, data, leadId);
    const estimates = await loadUploadedEstimates(db, data, leadId);
    summary.siteYears += siteYears;
    summary.broodRecords += broods;
    summary.uploadedEstimates += estimates;
    summary.submissions += [siteYears, broods, estimates].filter((rows) => rows > 0).length;
  }
  await updateNetworkSettings(db, { demo_network: true });
  return summary;
}
