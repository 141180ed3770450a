import type { Db } from "../db/client";
import { DEFAULT_MINIMUM_BROODS_PER_YEAR } from "../estimates/compute-site-estimates";

/**
 * A data-quality summary of one site's current data: counts, the range of each brood field,
 * and warnings about what the estimates will leave out or cannot do (years without a food peak,
 * years too small for their own estimates, broods without a hatch date, records outside the
 * stated study years, study years without records), plus what the last recomputation refused.
 */
export interface FieldRange {
  label: string;
  unit: string;
  min: number | null;
  max: number | null;
  mean: number | null;
  /** Broods without a value (hatch date only; the other fields are required). */
  missing: number;
}

export interface SiteDataQuality {
  broods: number;
  females: number;
  yearsWithRecords: number;
  siteYears: number;
  yearsWithFoodPeak: number;
  yearsWithTemperature: number;
  ranges: FieldRange[];
  warnings: string[];
  /** Estimates the last successful recomputation could not compute, with the reasons. */
  refused: { what: string; reason: string }[];
}

function yearList(years: readonly number[]): string {
  const shown = years.slice(0, 12).join(", ");
  return years.length > 12 ? `${shown} and ${years.length - 12} more` : shown;
}

interface RecomputeResult {
  refused?: { outcome: string; level: string; year: number | null; reason: string }[];
  warnings?: { message: string }[];
}

/** The summary for one site, from its accepted submissions and its last finished recomputation. */
export async function siteDataQuality(db: Db, site: { id: number; firstYear: number; lastYear: number }): Promise<SiteDataQuality> {
  const current = { siteId: site.id, submission: { status: "accepted" as const } };
  const [aggregate, missingHatch, females, byYear, siteYears, lastJob] = await Promise.all([
    db.broodRecord.aggregate({
      where: current,
      _count: { _all: true },
      _min: { layDateDoy: true, clutchSize: true, hatchDateDoy: true, fledglings: true, recruits: true },
      _max: { layDateDoy: true, clutchSize: true, hatchDateDoy: true, fledglings: true, recruits: true },
      _avg: { layDateDoy: true, clutchSize: true, hatchDateDoy: true, fledglings: true, recruits: true },
    }),
    db.broodRecord.count({ where: { ...current, hatchDateDoy: null } }),
    db.broodRecord.groupBy({ by: ["femaleId"], where: current }).then((rows) => rows.length),
    db.broodRecord.groupBy({ by: ["year"], where: current, _count: { _all: true }, orderBy: { year: "asc" } }),
    db.siteYear.findMany({ where: current, select: { year: true, foodPeakDoy: true, meanSpringTempC: true }, orderBy: { year: "asc" } }),
    db.job.findFirst({ where: { siteId: site.id, kind: "recompute_site_estimates", status: "succeeded" }, orderBy: { id: "desc" }, select: { result: true } }),
  ]);
  const broods = aggregate._count._all;
  const range = (label: string, unit: string, key: "layDateDoy" | "clutchSize" | "hatchDateDoy" | "fledglings" | "recruits", missing = 0): FieldRange => ({
    label,
    unit,
    min: aggregate._min[key],
    max: aggregate._max[key],
    mean: aggregate._avg[key],
    missing,
  });
  const ranges = broods
    ? [
        range("Lay date", "day of year", "layDateDoy"),
        range("Hatch date", "day of year", "hatchDateDoy", missingHatch),
        range("Clutch size", "eggs", "clutchSize"),
        range("Fledglings", "young", "fledglings"),
        range("Recruits", "young", "recruits"),
      ]
    : [];
  const peaks = siteYears.filter((y) => y.foodPeakDoy !== null);
  if (peaks.length) {
    const values = peaks.map((y) => y.foodPeakDoy!);
    ranges.push({ label: "Food peak", unit: "day of year", min: Math.min(...values), max: Math.max(...values), mean: values.reduce((a, b) => a + b, 0) / values.length, missing: siteYears.length - peaks.length });
  }
  const warnings: string[] = [];
  const peakYears = new Set(peaks.map((y) => y.year));
  const recordYears = byYear.map((y) => y.year);
  const withoutPeak = recordYears.filter((y) => !peakYears.has(y));
  if (broods && withoutPeak.length) warnings.push(`No food-peak date for ${yearList(withoutPeak)}: the broods of ${withoutPeak.length === 1 ? "that year" : "those years"} are left out of every mismatch estimate.`);
  const small = byYear.filter((y) => y._count._all < DEFAULT_MINIMUM_BROODS_PER_YEAR).map((y) => y.year);
  if (small.length) warnings.push(`Fewer than ${DEFAULT_MINIMUM_BROODS_PER_YEAR} broods in ${yearList(small)}: no single-year estimates for ${small.length === 1 ? "it" : "them"} (they still enter the site-level ones).`);
  if (missingHatch) warnings.push(`${missingHatch} of ${broods} broods have no hatch date (not needed for lay-date mismatch).`);
  const outside = recordYears.filter((y) => y < site.firstYear || y > site.lastYear);
  if (outside.length) warnings.push(`Brood records in ${yearList(outside)}, outside the stated study years ${site.firstYear}–${site.lastYear}.`);
  if (broods) {
    const recorded = new Set(recordYears);
    const gaps: number[] = [];
    for (let y = site.firstYear; y <= site.lastYear; y += 1) if (!recorded.has(y)) gaps.push(y);
    if (gaps.length) warnings.push(`No brood records for ${gaps.length} of the study years: ${yearList(gaps)}.`);
  }
  let refused: SiteDataQuality["refused"] = [];
  if (lastJob?.result) {
    try {
      const result = JSON.parse(lastJob.result) as RecomputeResult;
      refused = (result.refused ?? []).map((r) => ({ what: `${r.outcome.replace(/_/g, " ")}, ${r.level.replace("_", "-")}${r.year === null ? "" : `, ${r.year}`}`, reason: r.reason }));
      for (const w of result.warnings ?? []) warnings.push(`Last recomputation: ${w.message}.`);
    } catch {
      warnings.push("The last recomputation's report could not be read.");
    }
  }
  return {
    broods,
    females,
    yearsWithRecords: byYear.length,
    siteYears: siteYears.length,
    yearsWithFoodPeak: peaks.length,
    yearsWithTemperature: siteYears.filter((y) => y.meanSpringTempC !== null).length,
    ranges,
    warnings,
    refused,
  };
}
