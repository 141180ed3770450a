/**
 * The datasets of test/fixtures/r-stats/multilevel-reference.json (written by
 * make-multilevel-fixtures.R) as engine inputs, and the reference values R computed for them.
 */
import referenceJson from "@/test/fixtures/r-stats/multilevel-reference.json";
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign, type ModeratorDesign, type ModeratorSpec } from "@/lib/stats/meta/moderator-design";
import type { LevelSpec } from "@/lib/stats/meta/multilevel/nested-levels";

interface DatasetJson {
  description: string;
  y: number[];
  v: number[];
  levels: Record<string, string[]>;
  site?: string[];
  species?: string[];
  truth?: Record<string, number>;
  moderators: ({ kind: "numeric"; name: string; values: number[] } | { kind: "categorical"; name: string; values: string[]; reference: string })[];
}

export interface MultilevelReference {
  method: "reml" | "ml";
  moderated: boolean;
  columns: string[];
  levels: string[];
  groups: number[];
  sigma2: number[];
  /** Inverse observed-information SEs; null at the boundary. */
  sigma2_se: (number | null)[];
  gradient_max: number;
  log_likelihood: number;
  beta: number[];
  se: number[];
  profile_ci: [number, number][];
  lrt_statistic: number[];
  lrt_p_mixture: number[];
  lrt_p_naive: number[];
  typical_variance: number;
  i2: number[];
  total_i2: number;
  aic: number;
  bic: number;
  q: number;
  q_df: number;
  cr2?: { cluster: string; se: number[]; df: number[]; covariance: number[] };
}

export interface SingleLevelCr2Reference {
  tau2: number;
  columns: string[];
  beta: number[];
  se: number[];
  df: number[];
  covariance: number[];
}

const json = referenceJson as unknown as {
  r_version: string;
  datasets: Record<string, DatasetJson>;
  reference: Record<string, Record<string, unknown>>;
};

export const R_VERSION = json.r_version;

export interface MultilevelDataset {
  description: string;
  data: MetaData;
  levels: LevelSpec[];
  moderators: ModeratorDesign | null;
  specs: ModeratorSpec[];
  site: string[] | null;
  species: string[] | null;
  truth: Record<string, number> | null;
}

export function multilevelDataset(name: string): MultilevelDataset {
  const d = json.datasets[name];
  if (!d) throw new Error(`no multilevel dataset '${name}'`);
  const data = metaData({ estimates: d.y, variances: d.v });
  const specs: ModeratorSpec[] = d.moderators.map((m) =>
    m.kind === "numeric" ? { kind: "numeric", name: m.name, values: m.values } : { kind: "categorical", name: m.name, values: m.values, reference: m.reference },
  );
  const moderators = specs.length === 0 ? null : moderatorDesign(data.k, specs);
  return {
    description: d.description,
    data,
    levels: Object.entries(d.levels).map(([name, values]) => ({ name, values })),
    moderators,
    specs,
    site: d.site ?? null,
    species: d.species ?? null,
    truth: d.truth ?? null,
  };
}

export function multilevelReference(dataset: string, model: string): MultilevelReference {
  const value = json.reference[dataset]?.[model];
  if (!value) throw new Error(`no reference ${dataset}/${model}`);
  return value as MultilevelReference;
}

export function singleLevelCr2Reference(dataset: string, model: string): SingleLevelCr2Reference {
  const value = json.reference[dataset]?.[model];
  if (!value) throw new Error(`no reference ${dataset}/${model}`);
  return value as SingleLevelCr2Reference;
}
