import type { SiteDetail } from "../network/site-detail";
import type { createSite } from "../network/create-site";

type SiteRecord = Awaited<ReturnType<typeof createSite>> & { leadUser?: { displayName: string } | null };

/** A site record as the API shows it: codes and names, never internal ids. */
export function presentSite(site: SiteRecord) {
  return {
    code: site.code,
    name: site.name,
    species: { scientificName: site.species.scientificName, commonName: site.species.commonName },
    latitude: site.latitude,
    longitude: site.longitude,
    elevationM: site.elevationM,
    habitat: site.habitat,
    firstYear: site.firstYear,
    lastYear: site.lastYear,
    dateConvention: site.dateConvention,
    leadUser: site.leadUser?.displayName ?? null,
    notes: site.notes,
    createdAt: site.createdAt,
    updatedAt: site.updatedAt,
  };
}

/**
 * The site page's data as JSON: the site, its moderator values, current site-years and estimates
 * (submissions: /api/v1/submissions?site=CODE). `estimatesWithheld` is the policy's reason when
 * the caller may not see pooled results: the estimates are then left out, and the reply says why.
 */
export function presentSiteDetail(detail: SiteDetail, estimatesWithheld: string | null) {
  const { site } = detail;
  return {
    site: presentSite(site),
    moderators: site.moderatorValues.map((v) => ({
      key: v.moderator.key,
      label: v.moderator.label,
      unit: v.moderator.unit,
      numericValue: v.numericValue,
      categoricalValue: v.categoricalValue,
      standardError: v.standardError,
      source: v.source,
      method: v.method,
    })),
    siteYears: detail.siteYears.map((y) => ({
      year: y.year,
      foodPeakDoy: y.foodPeakDoy,
      foodPeakSe: y.foodPeakSe,
      meanSpringTempC: y.meanSpringTempC,
      broodCount: y.broodCount,
      submissionId: y.submissionId,
    })),
    estimates: estimatesWithheld === null ? detail.estimates.map(({ siteId: _siteId, ...e }) => ({ ...e, siteCode: site.code, species: site.species.scientificName })) : [],
    estimatesWithheld,
    broodsByYear: detail.broodsByYear,
  };
}
