import type { Db } from "../db/client";
import type { Figure } from "../analyses/run-figures";
import { toCsv } from "../export/csv";
import { siteDiagnostics, type DiagnosticOutcome, type SiteDiagnostics, type StoredDiagnosticEstimates } from "../estimates/site-diagnostics";
import { readNetworkSettings } from "../settings/network-settings";
import { normalQuantileStd } from "../stats/distributions/normal";
import type { ScatterFitPlotInput } from "../plots/scatter-fit-plot";

/**
 * The site page's two diagnostic charts from the site's current raw data: the outcome against
 * within-year mismatch in bins with the fitted curve, and annual means against annual mean
 * mismatch with the weighted line (definitions in lib/estimates/site-diagnostics.ts), drawn from
 * the site's stored computed estimates.
 */
export const DIAGNOSTIC_OUTCOMES: readonly DiagnosticOutcome[] = ["recruitment", "fledging_failure", "fledglings_successful", "recruits_per_female"];

const OUTCOME_AXIS: Record<DiagnosticOutcome, string> = {
  fledging_failure: "Proportion of broods that failed",
  fledglings_successful: "Fledglings per successful brood",
  recruitment: "Proportion of broods with a recruit",
  recruits_per_female: "Recruits per female",
};

const Z_975 = normalQuantileStd(0.975);

export type SiteDiagnosticsView =
  | { available: true; diagnostics: SiteDiagnostics; offsetDays: number; binned: Figure<ScatterFitPlotInput>; annual: Figure<ScatterFitPlotInput> }
  | { available: false; reason: string };

async function storedEstimates(db: Db, siteId: number, outcome: DiagnosticOutcome): Promise<StoredDiagnosticEstimates> {
  const rows = await db.estimate.findMany({
    where: { siteId, outcome, source: "computed", year: null, submission: { status: "accepted" } },
    select: { level: true, term: true, value: true },
  });
  const find = (level: string, term: string) => rows.find((r) => r.level === level && r.term === term)?.value;
  const linear = find("within_year", "linear");
  const quadratic = find("within_year", "quadratic");
  const slope = find("between_year", "linear");
  return {
    withinYear: linear !== undefined && quadratic !== undefined ? { linear, quadratic } : { missing: "the site has no stored within-year estimates of this outcome (they could not be computed, or are being recomputed)" },
    betweenYearSlope: slope ?? { missing: "the site has no stored between-year estimate of this outcome (it needs at least 3 years)" },
  };
}

/** Loads the site's current broods and food peaks and builds both charts for `outcome`. */
export async function siteDiagnosticFigures(db: Db, site: { id: number; code: string }, outcome: DiagnosticOutcome): Promise<SiteDiagnosticsView> {
  const broodSubmission = await db.submission.findFirst({ where: { siteId: site.id, kind: "brood_records", status: "accepted" }, select: { id: true } });
  if (!broodSubmission) return { available: false, reason: "the site has no current brood records (a site that uploads its own estimates has no raw data to show)" };
  const yearSubmission = await db.submission.findFirst({ where: { siteId: site.id, kind: "site_year_covariates", status: "accepted" }, select: { id: true } });
  const [broods, siteYears, settings, stored] = await Promise.all([
    db.broodRecord.findMany({
      where: { submissionId: broodSubmission.id },
      select: { year: true, femaleId: true, layDateDoy: true, hatchDateDoy: true, clutchSize: true, fledglings: true, recruits: true },
      orderBy: { id: "asc" },
    }),
    yearSubmission ? db.siteYear.findMany({ where: { submissionId: yearSubmission.id }, select: { year: true, foodPeakDoy: true } }) : Promise.resolve([]),
    readNetworkSettings(db),
    storedEstimates(db, site.id, outcome),
  ]);
  const peaks = new Map(siteYears.filter((y) => y.foodPeakDoy !== null).map((y) => [y.year, y.foodPeakDoy!]));
  const offsetDays = settings.mismatch_offset_days;
  const diagnostics = siteDiagnostics(broods, peaks, { basis: "lay_date", offsetDays }, outcome, stored);
  if (diagnostics.broods === 0) return { available: false, reason: "no brood of the site has a food-peak date for its year, so no mismatch can be computed" };
  const axis = OUTCOME_AXIS[outcome];
  const curveNote = diagnostics.curve.available
    ? `Curve: the site's stored within-year estimates (c ${diagnostics.curve.linear.toPrecision(3)}, c² ${diagnostics.curve.quadratic.toPrecision(3)}, ${diagnostics.outcome.family.link} link) with the intercept chosen so that it passes through the overall mean (${diagnostics.overallMean!.toPrecision(3)}) at c = 0; not refitted.`
    : `No curve: ${diagnostics.curve.reason}.`;
  const binned: ScatterFitPlotInput = {
    title: `${site.code}: ${axis.toLowerCase()} against within-year mismatch`,
    xLabel: "Within-year mismatch c (days from the year's mean mismatch)",
    yLabel: axis,
    points: diagnostics.bins.map((b) => ({
      label: `${b.from} to ${b.to} d`,
      x: b.meanWithin,
      y: b.meanOutcome,
      ...(b.standardError !== null ? { lower: b.meanOutcome - Z_975 * b.standardError, upper: b.meanOutcome + Z_975 * b.standardError } : {}),
      size: b.broods,
      tooltip: `c from ${b.from} to ${b.to} days: ${b.broods} broods, mean ${b.meanOutcome.toPrecision(3)}${b.standardError !== null ? ` (SE ${b.standardError.toPrecision(2)})` : ""}`,
    })),
    curves: diagnostics.curve.available ? [{ label: "fitted curve (stored estimates)", x: [...diagnostics.curve.within], y: [...diagnostics.curve.fitted] }] : [],
    note: `Points: bins of ${diagnostics.binWidth} days of c, at the bins' mean c, area proportional to broods (${diagnostics.broods} in all); bars ±1.96 SE of the bin mean. ${curveNote}`,
    idPrefix: "diagnostic-within",
  };
  const lineNote = diagnostics.line.available
    ? `Line: the site's stored between-year slope ${diagnostics.line.slope.toPrecision(3)} per day, through the broods-weighted means (the weighted least-squares line of that estimate); not refitted.`
    : `No line: ${diagnostics.line.reason}.`;
  const annual: ScatterFitPlotInput = {
    title: `${site.code}: annual means against annual mean mismatch`,
    xLabel: `Annual mean mismatch (days; lay date + ${offsetDays} d − food peak)`,
    yLabel: `${axis} (annual mean)`,
    points: diagnostics.annual.map((a) => ({
      label: String(a.year),
      x: a.meanMismatch,
      y: a.meanOutcome,
      size: a.broods,
      tooltip: `${a.year}: annual mean mismatch ${a.meanMismatch.toFixed(1)} d, mean ${a.meanOutcome.toPrecision(3)}, ${a.broods} broods`,
    })),
    curves: diagnostics.line.available ? [{ label: "weighted fit (stored slope)", x: [diagnostics.line.from, diagnostics.line.to], y: [diagnostics.line.intercept + diagnostics.line.slope * diagnostics.line.from, diagnostics.line.intercept + diagnostics.line.slope * diagnostics.line.to] }] : [],
    labelPoints: diagnostics.annual.length <= 30 ? "all" : "highlighted",
    note: `Points: one per year, area proportional to its broods. ${lineNote}`,
    idPrefix: "diagnostic-annual",
  };
  return {
    available: true,
    diagnostics,
    offsetDays,
    binned: {
      input: binned,
      fileName: `${site.code}-${outcome}-by-within-year-mismatch`,
      csv: toCsv(
        [
          { header: "c_from", value: (b: SiteDiagnostics["bins"][number]) => b.from },
          { header: "c_to", value: (b) => b.to },
          { header: "mean_c", value: (b) => b.meanWithin },
          { header: "broods", value: (b) => b.broods },
          { header: "mean_outcome", value: (b) => b.meanOutcome },
          { header: "standard_error", value: (b) => b.standardError },
        ],
        [...diagnostics.bins],
      ),
    },
    annual: {
      input: annual,
      fileName: `${site.code}-${outcome}-annual-means`,
      csv: toCsv(
        [
          { header: "year", value: (a: SiteDiagnostics["annual"][number]) => a.year },
          { header: "annual_mean_mismatch", value: (a) => a.meanMismatch },
          { header: "mean_outcome", value: (a) => a.meanOutcome },
          { header: "broods", value: (a) => a.broods },
        ],
        [...diagnostics.annual],
      ),
    },
  };
}
