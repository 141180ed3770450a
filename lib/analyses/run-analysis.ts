import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import { AppError } from "../errors/app-error";
import { parseStoredSpecification } from "./analyses";
import { selectAnalysisDataset, type AnalysisDataset } from "./analysis-dataset";
import { dataFingerprint } from "./data-fingerprint";
import { ENGINE_VERSION } from "./engine-version";
import { fitAnalysisWithPermutations } from "./fit-analysis";
import type { BlockProgress } from "./permutation-blocks";
import { metaResultToJson } from "../stats/meta/result-json";
import type { AnalysisSpecification } from "./specification";

/** A stored run as the API, CLI and pages show it. */
export interface AnalysisRunView {
  id: number;
  analysisId: number;
  createdAt: Date;
  engineVersion: string;
  dataFingerprint: string;
  /** The fingerprint of what the analysis would read today; null when it can no longer select data. */
  currentDataFingerprint: string | null;
  dataChanged: boolean;
  result: Record<string, unknown>;
}

/** What a run stores: the specification, the studies it pooled (and left out), and the fitted model. */
function storedResult(spec: AnalysisSpecification, dataset: AnalysisDataset, fit: unknown): Record<string, unknown> {
  return {
    specification: spec,
    selection: {
      link: dataset.link,
      scale: dataset.scale,
      moderators: dataset.moderators,
      studies: dataset.studies.map((s) => ({
        estimateId: s.estimateId,
        siteCode: s.siteCode,
        species: s.species,
        year: s.year,
        value: s.value,
        standardError: s.standardError,
        n: s.n,
        source: s.source,
        submissionId: s.submissionId,
        moderators: s.moderators,
      })),
      excluded: dataset.excluded,
      submissions: dataset.submissions,
      notes: dataset.notes,
    },
    fit,
  };
}

async function currentFingerprint(db: Db, spec: AnalysisSpecification): Promise<string | null> {
  try {
    return dataFingerprint(await selectAnalysisDataset(db, spec));
  } catch (error) {
    if (error instanceof AppError && error.code !== "internal") return null;
    throw error;
  }
}

async function view(db: Db, run: { id: number; analysisId: number; createdAt: Date; engineVersion: string; dataFingerprint: string; result: string }, spec: AnalysisSpecification): Promise<AnalysisRunView> {
  const current = await currentFingerprint(db, spec);
  let result: Record<string, unknown>;
  try {
    result = JSON.parse(run.result) as Record<string, unknown>;
  } catch {
    throw new AppError("internal", `analysis run ${run.id} holds a result that is not JSON`);
  }
  return {
    id: run.id,
    analysisId: run.analysisId,
    createdAt: run.createdAt,
    engineVersion: run.engineVersion,
    dataFingerprint: run.dataFingerprint,
    currentDataFingerprint: current,
    dataChanged: current !== run.dataFingerprint,
    result,
  };
}

/**
 * Runs a saved analysis on today's data: selects the current estimates it names with their sites'
 * moderators, fits the model, and stores an AnalysisRun with the data fingerprint and the engine
 * version, with its audit entry in the same transaction. Throws AppError not_found for an unknown
 * analysis and cannot_compute (with the reason) when nothing matches or the model cannot be
 * fitted; nothing is stored then. A permutation test runs in blocks, telling `progress` after
 * each (which may throw to stop the run: nothing is stored then either).
 */
export async function runAnalysis(db: Db, analysisId: number, actor: Actor, options: { progress?: BlockProgress } = {}): Promise<AnalysisRunView> {
  const analysis = await db.analysis.findUnique({ where: { id: analysisId } });
  if (!analysis) throw new AppError("not_found", `analysis ${analysisId} does not exist`, [{ field: "id", message: "unknown analysis", value: String(analysisId) }]);
  const spec = parseStoredSpecification(analysis.id, analysis.specification);
  const dataset = await selectAnalysisDataset(db, spec);
  const fit = await fitAnalysisWithPermutations(spec, dataset, options.progress);
  const fingerprint = dataFingerprint(dataset);
  const run = await db.$transaction(async (tx) => {
    const created = await tx.analysisRun.create({
      data: {
        analysisId,
        dataFingerprint: fingerprint,
        result: JSON.stringify(storedResult(spec, dataset, metaResultToJson(fit))),
        engineVersion: ENGINE_VERSION,
      },
    });
    await recordAudit(tx, actor, {
      action: "analysis.run",
      entityType: "AnalysisRun",
      entityId: created.id,
      after: { analysisId, analysisName: analysis.name, studies: dataset.studies.length, dataFingerprint: fingerprint, engineVersion: ENGINE_VERSION },
    });
    return created;
  });
  return view(db, run, spec);
}

/** One stored run of an analysis, with whether today's data differ. Throws AppError not_found. */
export async function getAnalysisRun(db: Db, analysisId: number | null, runId: number): Promise<AnalysisRunView> {
  const run = await db.analysisRun.findUnique({ where: { id: runId }, include: { analysis: true } });
  if (!run || (analysisId !== null && run.analysisId !== analysisId)) {
    throw new AppError("not_found", `analysis run ${runId} does not exist${analysisId !== null ? ` for analysis ${analysisId}` : ""}`, [
      { field: "runId", message: "unknown run", value: String(runId) },
    ]);
  }
  return view(db, run, parseStoredSpecification(run.analysis.id, run.analysis.specification));
}
