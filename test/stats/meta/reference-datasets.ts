/**
 * The generated datasets shared by the R and statsmodels reference fixtures
 * (test/fixtures/r-stats/make-meta-fixtures.R writes them), as engine inputs.
 */
import datasetsJson from "@/test/fixtures/r-stats/meta-datasets.json";
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign, type ModeratorDesign, type ModeratorSpec } from "@/lib/stats/meta/moderator-design";

interface DatasetJson {
  description: string;
  y: number[];
  v: number[];
  case_weights?: number[];
  moderators: ({ kind: "numeric"; name: string; values: number[] } | { kind: "categorical"; name: string; values: string[]; reference: string })[];
}

export interface ReferenceDataset {
  name: string;
  description: string;
  data: MetaData;
  /** Null when the dataset has no moderators. */
  moderators: ModeratorDesign | null;
  specs: ModeratorSpec[];
}

const raw = (datasetsJson as unknown as { datasets: Record<string, DatasetJson> }).datasets;

export function referenceDataset(name: string): ReferenceDataset {
  const d = raw[name];
  if (!d) throw new Error(`no reference dataset '${name}'`);
  const data = metaData({ estimates: d.y, variances: d.v, caseWeights: d.case_weights });
  const specs: ModeratorSpec[] = d.moderators.map((m) =>
    m.kind === "numeric" ? { kind: "numeric", name: m.name, values: m.values } : { kind: "categorical", name: m.name, values: m.values, reference: m.reference },
  );
  return { name, description: d.description, data, moderators: specs.length > 0 ? moderatorDesign(data.k, specs) : null, specs };
}

export const REFERENCE_DATASET_NAMES = Object.keys(raw);
