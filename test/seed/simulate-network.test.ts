import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { broodRecordRowSchema } from "@/lib/ingest/schemas/brood-record-row";
import { estimateRowSchema } from "@/lib/ingest/schemas/estimate-row";
import { siteYearRowSchema } from "@/lib/ingest/schemas/site-year-row";
import { DEFAULT_DEMO_SEED, simulateNetwork, type SimulatedNetwork } from "@/seed/simulate";
import { speciesParameters } from "@/seed/simulate/species";

const fingerprint = (network: SimulatedNetwork) => createHash("sha256").update(JSON.stringify(network)).digest("hex");

const network = simulateNetwork({ seed: DEFAULT_DEMO_SEED });
const rawSites = network.sites.filter((s) => s.site.contribution === "brood_records");
const estimateSites = network.sites.filter((s) => s.site.contribution === "estimates_only");

describe("the demo network is deterministic", () => {
  it("gives identical output for the same seed", () => {
    const again = simulateNetwork({ seed: DEFAULT_DEMO_SEED });
    expect(fingerprint(again)).toBe(fingerprint(network));
    expect(again.truth).toEqual(network.truth);
  });

  it("gives different data for a different seed", () => {
    const other = simulateNetwork({ seed: DEFAULT_DEMO_SEED + 1 });
    expect(fingerprint(other)).not.toBe(fingerprint(network));
    expect(other.sites.map((s) => s.site.latitude)).not.toEqual(network.sites.map((s) => s.site.latitude));
    expect(other.sites[0]!.broods.slice(0, 50)).not.toEqual(network.sites[0]!.broods.slice(0, 50));
  });

  it("gives a site the same data in a subset as in the full network", () => {
    const subset = simulateNetwork({ seed: DEFAULT_DEMO_SEED, siteCodes: ["ORL", "YSK"] });
    expect(subset.sites.map((s) => s.site.code)).toEqual(["ORL", "YSK"]);
    for (const data of subset.sites) expect(data).toEqual(network.sites.find((s) => s.site.code === data.site.code));
    expect(subset.users.map((u) => u.role)).toEqual(["coordinator", "site_lead", "site_lead", "viewer"]);
  });

  it("refuses a seed that is not a non-negative whole number, and unknown site codes", () => {
    for (const seed of [-1, 1.5, Number.NaN, Number.POSITIVE_INFINITY, 2 ** 53]) {
      expect(() => simulateNetwork({ seed }), String(seed)).toThrow(RangeError);
    }
    expect(() => simulateNetwork({ seed: 1, siteCodes: ["QLM", "NOPE"] })).toThrow(/NOPE/);
  });
});

describe("the demo network has the stated shape", () => {
  it("has at least 20 sites on 3-4 species, each species with several sites", () => {
    expect(network.sites.length).toBeGreaterThanOrEqual(20);
    expect(new Set(network.sites.map((s) => s.site.code)).size).toBe(network.sites.length);
    const species = new Set(network.sites.map((s) => s.site.speciesKey));
    expect(species.size).toBeGreaterThanOrEqual(3);
    expect(species.size).toBeLessThanOrEqual(4);
    expect(network.species.map((s) => s.key).sort()).toEqual([...species].sort());
    for (const key of species) expect(rawSites.filter((s) => s.site.speciesKey === key).length, key).toBeGreaterThanOrEqual(2);
  });

  it.each([DEFAULT_DEMO_SEED, 1, 99])("keeps latitudes in 40-66 N, warming in 0-0.7 C per decade, 15-45 study years (seed %i)", (seed) => {
    const sites = seed === DEFAULT_DEMO_SEED ? network.sites : simulateNetwork({ seed }).sites;
    for (const { site } of sites) {
      expect(site.latitude, site.code).toBeGreaterThanOrEqual(40);
      expect(site.latitude, site.code).toBeLessThanOrEqual(66);
      expect(site.warmingRateCPerDecade, site.code).toBeGreaterThanOrEqual(0);
      expect(site.warmingRateCPerDecade, site.code).toBeLessThanOrEqual(0.7);
      const years = site.lastYear - site.firstYear + 1;
      expect(years, site.code).toBeGreaterThanOrEqual(15);
      expect(years, site.code).toBeLessThanOrEqual(45);
    }
    // Stratified draws cover the ranges: some site in each end quarter.
    const latitudes = sites.map((s) => s.site.latitude);
    expect(Math.min(...latitudes)).toBeLessThan(46.5);
    expect(Math.max(...latitudes)).toBeGreaterThan(59.5);
    const warming = sites.map((s) => s.site.warmingRateCPerDecade);
    expect(Math.min(...warming)).toBeLessThan(0.175);
    expect(Math.max(...warming)).toBeGreaterThan(0.525);
  });

  it("has 40-300 broods in every site-year, matching the year's brood count", () => {
    for (const { site, siteYears, broods } of rawSites) {
      expect(siteYears.map((y) => y.year)).toEqual(Array.from({ length: site.lastYear - site.firstYear + 1 }, (_, i) => site.firstYear + i));
      for (const year of siteYears) {
        const count = broods.filter((b) => b.year === year.year).length;
        expect(count, `${site.code} ${year.year}`).toBe(year.broodCount);
        expect(count).toBeGreaterThanOrEqual(40);
        expect(count).toBeLessThanOrEqual(300);
      }
    }
  });

  it("gives one brood per female per year, with some females breeding in several years", () => {
    for (const { site, broods } of rawSites) {
      const keys = new Set(broods.map((b) => `${b.year}/${b.femaleId}`));
      expect(keys.size, site.code).toBe(broods.length);
      const yearsPerFemale = new Map<string, number>();
      for (const b of broods) yearsPerFemale.set(b.femaleId, (yearsPerFemale.get(b.femaleId) ?? 0) + 1);
      const returning = [...yearsPerFemale.values()].filter((n) => n > 1).length;
      expect(returning / yearsPerFemale.size, site.code).toBeGreaterThan(0.1);
    }
  });

  it("keeps every brood plausible: lay dates 90-170, clutch in the species range, fledglings <= clutch, 0 <= recruits <= fledglings", () => {
    for (const { site, broods } of rawSites) {
      const [minClutch, maxClutch] = speciesParameters(site.speciesKey).clutchRange;
      const implausible = broods.filter(
        (b) =>
          b.layDateDoy < 90 ||
          b.layDateDoy > 170 ||
          b.clutchSize < minClutch ||
          b.clutchSize > maxClutch ||
          b.fledglings < 0 ||
          b.fledglings > b.clutchSize ||
          b.recruits < 0 ||
          b.recruits > b.fledglings ||
          (b.hatchDateDoy !== null && b.hatchDateDoy <= b.layDateDoy),
      );
      expect(implausible, site.code).toEqual([]);
      // Every outcome occurs: failures, successes, recruits, multi-recruit broods.
      expect(broods.some((b) => b.fledglings === 0), site.code).toBe(true);
      expect(broods.some((b) => b.recruits >= 2), site.code).toBe(true);
    }
    expect(network.truth.diagnostics.layDatesClamped / network.truth.diagnostics.broods).toBeLessThan(0.01);
  });

  it("passes the upload validation every site's files go through", () => {
    for (const { site, siteYears, broods, uploadedEstimates } of network.sites) {
      expect(broods.filter((b) => !broodRecordRowSchema.safeParse(b).success), site.code).toEqual([]);
      expect(siteYears.filter((y) => !siteYearRowSchema.safeParse(y).success), site.code).toEqual([]);
      expect(uploadedEstimates.filter((e) => !estimateRowSchema.safeParse(e).success), site.code).toEqual([]);
    }
  });

  it("has a few sites that share per-year within-year estimates only", () => {
    expect(estimateSites.length).toBeGreaterThanOrEqual(3);
    expect(rawSites.length).toBeGreaterThanOrEqual(20);
    for (const { site, broods, siteYears, uploadedEstimates } of estimateSites) {
      expect(broods).toEqual([]);
      expect(siteYears).toEqual([]);
      expect(uploadedEstimates.length, site.code).toBeGreaterThanOrEqual(10);
      for (const e of uploadedEstimates) {
        expect(e).toMatchObject({ level: "within_year", term: "linear", scale: "per_day" });
        expect(e.link).toBe(e.outcome === "fledglings_successful" ? "log" : "logit");
        expect(e.year).toBeGreaterThanOrEqual(site.firstYear);
        expect(e.year).toBeLessThanOrEqual(site.lastYear);
        expect(e.standardError).toBeGreaterThan(0);
        expect(e.n).toBeGreaterThanOrEqual(1);
        expect(e.method.length).toBeGreaterThan(40);
      }
    }
  });

  it("invents its people: example.org addresses, one lead per site, a coordinator and a viewer", () => {
    expect(network.users.filter((u) => u.role === "coordinator")).toHaveLength(1);
    expect(network.users.filter((u) => u.role === "viewer")).toHaveLength(1);
    expect(network.users.filter((u) => u.role === "site_lead")).toHaveLength(network.sites.length);
    for (const u of network.users) expect(u.email).toMatch(/^[a-z]+(\.[a-z]+)+@example\.org$/);
    expect(new Set(network.users.map((u) => u.email)).size).toBe(network.users.length);
    expect(new Set(network.sites.map((s) => s.site.leadEmail)).size).toBe(network.sites.length);
  });
});

describe("the truth describes every site", () => {
  const truthOf = (code: string) => network.truth.sites.find((s) => s.code === code)!;

  it("states the definitions the pipeline uses", () => {
    expect(network.truth.seed).toBe(DEFAULT_DEMO_SEED);
    expect(network.truth.definitions.mismatchOffsetDays).toBe(30);
    expect(network.truth.sites.map((s) => s.code)).toEqual(network.sites.map((s) => s.site.code));
    expect(network.truth.outcomes.fledging_failure.pipelineTargetExact).toBe(true);
    expect(network.truth.outcomes.recruitment.pipelineTargetExact).toBe(true);
    expect(network.truth.outcomes.fledglings_successful.pipelineTargetExact).toBe(false);
    expect(network.truth.outcomes.recruits_per_female.pipelineTargetExact).toBe(false);
  });

  it("gives binary outcomes exact targets and count outcomes projected ones, for raw-data sites", () => {
    for (const { site, siteYears } of rawSites) {
      const truth = truthOf(site.code);
      for (const outcome of ["fledging_failure", "recruitment"] as const) {
        const coefficients = truth.withinYear[outcome]!;
        expect(coefficients.linear.exact).toBe(true);
        expect(coefficients.linear.pipelineTarget).toBe(coefficients.linear.generating);
        expect(coefficients.quadratic.pipelineTarget).toBe(coefficients.quadratic.generating);
      }
      const fledglings = truth.withinYear.fledglings_successful!;
      expect(fledglings.linear.exact).toBe(false);
      // The projection differs from the generating slope only by truncation, cap and the chance
      // association of clutch sizes with c: well within 0.002 per day here.
      expect(Math.abs(fledglings.linear.pipelineTarget - fledglings.linear.generating), site.code).toBeLessThan(0.002);
      const recruits = truth.withinYear.recruits_per_female!;
      // log E[recruits] is attenuated by about (1 - P(recruit)) relative to the logit slope.
      const ratio = recruits.linear.pipelineTarget / recruits.linear.generating;
      expect(ratio, site.code).toBeGreaterThan(0.75);
      expect(ratio, site.code).toBeLessThan(1);
      expect(truth.siteYears.map((y) => y.year)).toEqual(siteYears.map((y) => y.year));
    }
  });

  it("gives estimates-only sites exact targets for the outcomes they upload, and nothing else", () => {
    for (const { site, uploadedEstimates } of estimateSites) {
      const truth = truthOf(site.code);
      expect(Object.keys(truth.withinYear).sort()).toEqual([...new Set(uploadedEstimates.map((e) => e.outcome))].sort());
      expect(truth.siteYears).toEqual([]);
    }
  });
});
