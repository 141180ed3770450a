import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { readNetworkSettings } from "../settings/network-settings";
import { ModelInputError } from "../stats/model-error";
import { fitWarmingRate, type WarmingRateResult } from "../stats/phenology/fit-warming-rate";
import { runInSlices, type ComputationStep } from "../stats/stepwise";
import { siteEstimateSteps, type SiteEstimateOptions } from "./compute-site-estimates";
import type { RefusedEstimate } from "./estimate-types";
import type { MismatchBasis } from "./mismatch";
import type { StatWarning } from "../stats/warnings";

/** The moderator a computed warming rate is written to (the demo seed uses the same key). */
export const WARMING_RATE_MODERATOR_KEY = "warming_rate";

export interface RecomputeOptions {
  basis?: MismatchBasis;
  bootstrapReplicates?: number;
  seed?: number;
  /**
   * Told where the recomputation has got (fraction of the whole, and what it is doing) after
   * each slice of model fits and bootstrap blocks; may throw to stop it before anything is written.
   */
  onStep?: (step: ComputationStep) => Promise<void>;
  /** Stops the recomputation between steps; nothing is written then. */
  signal?: AbortSignal;
  /** Longest stretch of model fitting between two reports to `onStep` (default 100 ms; see runInSlices). */
  sliceMs?: number;
}

/** Fractions of a recomputation: reading the site's data, then the models, then writing. */
const READ_SHARE = 0.05;
const WRITE_SHARE = 0.05;

export interface RecomputeReport {
  siteId: number;
  /** The brood-record submission the estimates were computed from. */
  submissionId: number;
  offsetDays: number;
  estimatesWritten: number;
  /** Computed estimates of the previous set that were replaced. */
  estimatesReplaced: number;
  refused: readonly RefusedEstimate[];
  warnings: readonly StatWarning[];
  /** The warming rate written as the site's computed moderator value, or why none was. */
  warmingRate: { written: true; result: WarmingRateResult } | { written: false; reason: string };
}

const TRANSACTION_TIMEOUT_MS = 120_000;

function warmingMethod(result: WarmingRateResult): string {
  return (
    `Least-squares slope of the site-year mean spring temperatures on year, ${result.firstYear}-${result.lastYear} (${result.n} years), ` +
    `times 10 (degrees C per decade); SE classical on ${result.residualDf} df. ` +
    `Theil-Sen slope (Sen 1968) as a robust check: ${result.theilSenPerDecade.toFixed(3)} (95% interval ${result.theilSenLower.toFixed(3)} to ${result.theilSenUpper.toFixed(3)}).`
  );
}

/**
 * Recomputes one site's estimates from its current (accepted) brood-record submission and the food
 * peaks and spring temperatures of its accepted site-year submission, then, in one transaction,
 * deletes the site's previous computed Estimate rows, writes the new ones (source computed) and
 * writes the warming rate as the site's computed warming_rate moderator value (replacing the
 * value there, entered or computed; a site with fewer than 3 temperature years keeps an entered
 * value and loses a stale computed one). Uploaded estimates are never touched.
 * The mismatch offset and nestling age come from the network settings (mismatch_offset_days,
 * default 30; nestling_age_at_peak_demand_days, default 9).
 *
 * Throws AppError not_found for an unknown site, cannot_compute when the site has no accepted
 * brood records or nothing can be computed (the stored estimates are then left as they were).
 */
export async function recomputeSiteEstimates(db: Db, siteId: number, options: RecomputeOptions = {}): Promise<RecomputeReport> {
  const site = await db.site.findUnique({ where: { id: siteId }, select: { id: true, code: true } });
  if (!site) throw new AppError("not_found", `site ${siteId} does not exist`);
  const settings = await readNetworkSettings(db);
  const broodSubmission = await db.submission.findFirst({ where: { siteId, kind: "brood_records", status: "accepted" }, select: { id: true } });
  if (!broodSubmission) throw new AppError("cannot_compute", `site ${site.code} has no accepted brood-record submission to compute estimates from`);
  const yearSubmission = await db.submission.findFirst({ where: { siteId, kind: "site_year_covariates", status: "accepted" }, select: { id: true } });
  await options.onStep?.({ fraction: 0, message: `reading the brood records of submission ${broodSubmission.id}` });
  const broods = await db.broodRecord.findMany({
    where: { submissionId: broodSubmission.id },
    select: { year: true, femaleId: true, layDateDoy: true, hatchDateDoy: true, clutchSize: true, fledglings: true, recruits: true },
    orderBy: { id: "asc" },
  });
  const siteYears = yearSubmission
    ? await db.siteYear.findMany({ where: { submissionId: yearSubmission.id }, select: { year: true, foodPeakDoy: true, meanSpringTempC: true }, orderBy: { year: "asc" } })
    : [];
  const foodPeaks = new Map<number, number>();
  for (const row of siteYears) if (row.foodPeakDoy !== null) foodPeaks.set(row.year, row.foodPeakDoy);
  const basis = options.basis ?? "lay_date";
  const estimateOptions: SiteEstimateOptions = {
    basis,
    offsetDays: settings.mismatch_offset_days,
    nestlingAgeDays: settings.nestling_age_at_peak_demand_days,
    bootstrapReplicates: options.bootstrapReplicates,
    seed: options.seed,
  };
  let computed;
  try {
    computed = await runInSlices(siteEstimateSteps(broods, foodPeaks, estimateOptions), {
      signal: options.signal,
      sliceMs: options.sliceMs,
      onStep: async (step) => options.onStep?.({ fraction: READ_SHARE + (1 - READ_SHARE - WRITE_SHARE) * step.fraction, message: step.message }),
    });
  } catch (error) {
    if (error instanceof ModelInputError) throw new AppError("cannot_compute", `site ${site.code}: ${error.message}`);
    throw error;
  }
  for (const e of computed.estimates) {
    // The pure layer never returns these; a stored estimate must have both.
    if (!Number.isFinite(e.estimate) || !(e.se > 0) || !Number.isFinite(e.se)) {
      throw new AppError("internal", `site ${site.code}: ${e.outcome} ${e.level} ${e.term} has estimate ${e.estimate} with SE ${e.se}; nothing was written`);
    }
  }
  const temperatures = siteYears.filter((row) => row.meanSpringTempC !== null);
  let warming: RecomputeReport["warmingRate"];
  try {
    const result = fitWarmingRate(
      temperatures.map((row) => row.year),
      temperatures.map((row) => row.meanSpringTempC!),
    );
    warming = { written: true, result };
  } catch (error) {
    if (!(error instanceof ModelInputError)) throw error;
    warming = { written: false, reason: error.message };
  }

  await options.onStep?.({ fraction: 1 - WRITE_SHARE, message: `writing ${computed.estimates.length} estimates` });
  options.signal?.throwIfAborted();
  const report = await db.$transaction(
    async (tx) => {
      const removed = await tx.estimate.deleteMany({ where: { siteId, source: "computed" } });
      await tx.estimate.createMany({
        data: computed.estimates.map((e) => ({
          siteId,
          submissionId: broodSubmission.id,
          outcome: e.outcome,
          level: e.level,
          term: e.term,
          year: e.year,
          value: e.estimate,
          standardError: e.se,
          n: e.n,
          scale: e.scale,
          link: e.link,
          source: "computed" as const,
          method: e.method,
        })),
      });
      const moderator = await tx.moderator.upsert({
        where: { key: WARMING_RATE_MODERATOR_KEY },
        create: {
          key: WARMING_RATE_MODERATOR_KEY,
          label: "Spring warming rate",
          unit: "degrees C per decade",
          kind: "numeric",
          description: "Linear trend of the site's mean spring temperature over its study years, degrees C per decade.",
        },
        update: {},
        select: { id: true },
      });
      if (warming.written) {
        const values = { numericValue: warming.result.slopePerDecade, standardError: warming.result.standardError, source: "computed" as const, method: warmingMethod(warming.result), categoricalValue: null };
        await tx.moderatorValue.upsert({
          where: { moderatorId_siteId: { moderatorId: moderator.id, siteId } },
          create: { moderatorId: moderator.id, siteId, ...values },
          update: values,
        });
      } else {
        await tx.moderatorValue.deleteMany({ where: { moderatorId: moderator.id, siteId, source: "computed" } });
      }
      return { replaced: removed.count };
    },
    { timeout: TRANSACTION_TIMEOUT_MS, maxWait: 60_000 },
  );
  return {
    siteId,
    submissionId: broodSubmission.id,
    offsetDays: computed.offsetDays,
    estimatesWritten: computed.estimates.length,
    estimatesReplaced: report.replaced,
    refused: computed.refused,
    warnings: computed.warnings,
    warmingRate: warming,
  };
}
