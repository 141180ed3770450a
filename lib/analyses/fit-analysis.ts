import { AppError } from "../errors/app-error";
import { ModelInputError } from "../stats/model-error";
import { metaData, StudyInputError } from "../stats/meta/meta-data";
import { moderatorDesign, type ModeratorSpec } from "../stats/meta/moderator-design";
import { fitMetaModel } from "../stats/meta/fit-meta-model";
import type { MetaModelResult } from "../stats/meta/meta-result";
import type { AnalysisDataset } from "./analysis-dataset";
import type { AnalysisSpecification } from "./specification";

/**
 * Fits an analysis's model to its selected studies with the pooling engine: the estimates with
 * their standard errors, a design from the moderators (numeric as given, categorical as treatment
 * contrasts), the tau^2 estimator ("fe" for the common-effect model), the test and the
 * confidence level of the specification.
 *
 * Throws AppError cannot_compute with the engine's reason when the model cannot be fitted; a
 * problem with one study names its estimate, site and year.
 */
export function fitAnalysis(spec: AnalysisSpecification, dataset: AnalysisDataset): MetaModelResult {
  const { studies } = dataset;
  try {
    const data = metaData({ estimates: studies.map((s) => s.value), standardErrors: studies.map((s) => s.standardError) });
    const moderators: ModeratorSpec[] = dataset.moderators.map((column) =>
      column.kind === "numeric"
        ? { kind: "numeric", name: column.key, values: studies.map((s) => s.moderators[column.key] as number) }
        : { kind: "categorical", name: column.key, values: studies.map((s) => String(s.moderators[column.key])) },
    );
    const design = moderators.length ? moderatorDesign(studies.length, moderators).design : undefined;
    return fitMetaModel(data, {
      method: spec.model.type === "common_effect" ? "fe" : spec.model.tau2Estimator,
      test: spec.test,
      confidenceLevel: spec.confidenceLevel,
      ...(design ? { design } : {}),
    });
  } catch (error) {
    if (error instanceof StudyInputError && error.studyIndex !== undefined) {
      const study = studies[error.studyIndex]!;
      throw new AppError("cannot_compute", error.message, [
        { field: error.field, message: `estimate ${study.estimateId} of site ${study.siteCode}${study.year === null ? "" : ` (${study.year})`}: ${error.message}` },
      ]);
    }
    if (error instanceof ModelInputError) throw new AppError("cannot_compute", error.message);
    throw error;
  }
}
