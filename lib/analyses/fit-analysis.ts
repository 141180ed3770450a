import { AppError } from "../errors/app-error";
import type { DesignMatrix } from "../stats/linear/design-matrix";
import { ModelInputError } from "../stats/model-error";
import { metaData, StudyInputError, type MetaData } from "../stats/meta/meta-data";
import { moderatorDesign, type ModeratorSpec } from "../stats/meta/moderator-design";
import { fitMetaModel } from "../stats/meta/fit-meta-model";
import { fitMultilevelModel } from "../stats/meta/multilevel/fit-multilevel-model";
import type { LevelSpec } from "../stats/meta/multilevel/nested-levels";
import { addClusterRobustInference, type ClusterSpec } from "../stats/meta/robust/cluster-robust-inference";
import type { MetaModelResult } from "../stats/meta/meta-result";
import type { SensitivityFitOptions } from "../stats/meta/sensitivity/subset-fit";
import type { AnalysisDataset, AnalysisStudy, ModeratorColumn } from "./analysis-dataset";
import { fitWithPermutationBlocks, type BlockProgress } from "./permutation-blocks";
import type { AnalysisSpecification } from "./specification";

/**
 * Fits an analysis's model to its selected studies with the pooling engine: the estimates with
 * their standard errors, a design from the moderators (numeric as given, categorical as treatment
 * contrasts), the tau^2 estimator ("fe" for the common-effect model), the test and the
 * confidence level of the specification, and the permutation test when the specification asks.
 * With levels the model is multilevel (nested random intercepts by species, site and estimate,
 * variance components by REML or ML); with a robust cluster the coefficients also get
 * cluster-robust (CR2) standard errors with Satterthwaite t tests.
 *
 * Throws AppError cannot_compute with the engine's reason when the model cannot be fitted; a
 * problem with one study names its estimate, site and year.
 */
export interface AnalysisModelInput {
  data: MetaData;
  /** The model options every fit of this analysis uses (design included). */
  options: SensitivityFitOptions & { design?: DesignMatrix };
  /** Nested levels of a multilevel model, outermost first (empty: single level). */
  levels: LevelSpec[];
  cluster: ClusterSpec | undefined;
}

type ModelStudy = Pick<AnalysisStudy, "estimateId" | "siteCode" | "species" | "year" | "value" | "standardError" | "moderators">;

/** The group of a study at each level: its species, its site, itself. */
const GROUP_OF: Record<AnalysisSpecification["levels"][number], (s: ModelStudy) => string> = {
  species: (s) => s.species,
  site: (s) => s.siteCode,
  estimate: (s) => `${s.siteCode}${s.year === null ? "" : ` ${s.year}`} #${s.estimateId}`,
};

/** The engine's input for an analysis: from a fresh selection or from a stored run's studies. */
export function analysisModelInput(spec: Pick<AnalysisSpecification, "model" | "test" | "confidenceLevel" | "levels" | "robustCluster">, studies: readonly ModelStudy[], columns: readonly ModeratorColumn[]): AnalysisModelInput {
  const data = metaData({ estimates: studies.map((s) => s.value), standardErrors: studies.map((s) => s.standardError) });
  const moderators: ModeratorSpec[] = columns.map((column) =>
    column.kind === "numeric"
      ? { kind: "numeric", name: column.key, values: studies.map((s) => s.moderators[column.key] as number) }
      : { kind: "categorical", name: column.key, values: studies.map((s) => String(s.moderators[column.key])) },
  );
  const design = moderators.length ? moderatorDesign(studies.length, moderators).design : undefined;
  return {
    data,
    options: {
      method: spec.model.type === "common_effect" ? "fe" : spec.model.tau2Estimator,
      test: spec.test,
      confidenceLevel: spec.confidenceLevel,
      ...(design ? { design } : {}),
    },
    levels: spec.levels.map((level) => ({ name: level, values: studies.map(GROUP_OF[level]) })),
    cluster: spec.robustCluster ? { name: spec.robustCluster, labels: studies.map(GROUP_OF[spec.robustCluster]) } : undefined,
  };
}

/** Fits the model of `input`: multilevel when it has levels, with cluster-robust inference when it has a cluster. */
export function fitModelInput(input: AnalysisModelInput): MetaModelResult {
  const { data, options, levels, cluster } = input;
  if (levels.length > 0) {
    if (options.method !== "reml" && options.method !== "ml") throw new ModelInputError("a multilevel model is fitted by REML or ML");
    return fitMultilevelModel(data, { levels, method: options.method, confidenceLevel: options.confidenceLevel, ...(options.design ? { design: options.design } : {}), ...(cluster ? { cluster } : {}) });
  }
  const fit = fitMetaModel(data, options);
  return cluster ? addClusterRobustInference(fit, data, cluster, options.design) : fit;
}

/** Runs `fit`, turning the engine's input errors into AppError cannot_compute naming the study at fault. */
export async function withAnalysisErrors<T>(studies: readonly ModelStudy[], fit: () => T | Promise<T>): Promise<T> {
  try {
    return await fit();
  } catch (error) {
    throw analysisError(studies, error);
  }
}

function analysisError(studies: readonly ModelStudy[], error: unknown): unknown {
  if (error instanceof StudyInputError && error.studyIndex !== undefined) {
    const study = studies[error.studyIndex]!;
    return new AppError("cannot_compute", error.message, [
      { field: error.field, message: `estimate ${study.estimateId} of site ${study.siteCode}${study.year === null ? "" : ` (${study.year})`}: ${error.message}` },
    ]);
  }
  if (error instanceof ModelInputError) return new AppError("cannot_compute", error.message);
  return error;
}

/** The fit without a permutation test, at once (see the module comment for errors). */
export function fitAnalysis(spec: AnalysisSpecification, dataset: AnalysisDataset): MetaModelResult {
  try {
    return fitModelInput(analysisModelInput(spec, dataset.studies, dataset.moderators));
  } catch (error) {
    throw analysisError(dataset.studies, error);
  }
}

/**
 * The fit with the specification's permutation test, if any, run in blocks that report progress
 * and yield to other work between blocks (permutation-blocks.ts). `progress` may throw to stop
 * (a cancelled job). Without a permutation test this is fitAnalysis.
 */
export async function fitAnalysisWithPermutations(spec: AnalysisSpecification, dataset: AnalysisDataset, progress: BlockProgress = async () => undefined): Promise<MetaModelResult> {
  if (!spec.permutationTest) return fitAnalysis(spec, dataset);
  const settings = spec.permutationTest;
  return withAnalysisErrors(dataset.studies, () => {
    const { data, options } = analysisModelInput(spec, dataset.studies, dataset.moderators);
    return fitWithPermutationBlocks(data, options, settings, progress);
  });
}
