"use server";

import { redirect } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import { createAnalysis } from "@/lib/analyses/analyses";
import { requireActionActor } from "../../_server/current-actor";
import { formStateFromError, formStateFromZod, type FormState } from "../../_server/form-state";

const text = (form: FormData, key: string) => {
  const value = form.get(key);
  return typeof value === "string" && value.trim() !== "" ? value.trim() : undefined;
};
const number = (form: FormData, key: string) => {
  const value = text(form, key);
  return value === undefined ? undefined : Number(value);
};

/** The builder's form as a specification object, for the shared schema to validate. */
function specificationFromForm(form: FormData): unknown {
  const sites = text(form, "sites")?.split(/[\s,;]+/).filter(Boolean);
  const species = form.getAll("species").map(String);
  const modelType = text(form, "model") ?? "random_effects";
  return {
    name: text(form, "name"),
    description: text(form, "description") ?? "",
    outcome: text(form, "outcome"),
    level: text(form, "level"),
    term: text(form, "term"),
    scale: text(form, "scale"),
    grain: text(form, "grain"),
    source: text(form, "source"),
    model: modelType === "common_effect" ? { type: "common_effect" } : { type: "random_effects", tau2Estimator: text(form, "tau2Estimator") ?? "reml" },
    test: text(form, "test"),
    moderators: form.getAll("moderators").map(String),
    subsets: {
      ...(species.length ? { species } : {}),
      ...(sites?.length ? { sites } : {}),
      ...(number(form, "yearFrom") !== undefined ? { yearFrom: number(form, "yearFrom") } : {}),
      ...(number(form, "yearTo") !== undefined ? { yearTo: number(form, "yearTo") } : {}),
    },
    confidenceLevel: number(form, "confidenceLevel") ?? 0.95,
    levels: form.getAll("levels").map(String),
    ...(text(form, "robustCluster") ? { robustCluster: text(form, "robustCluster") } : {}),
    ...(form.get("permutationTest") === "on" ? { permutationTest: { permutations: number(form, "permutations"), seed: number(form, "permutationSeed") ?? 1 } } : {}),
  };
}

export async function createAnalysisAction(_previous: FormState, form: FormData): Promise<FormState> {
  let id: number;
  try {
    const db = getDb();
    const actor = await requireActionActor("analysis.save");
    const parsed = analysisSpecificationSchema.safeParse(specificationFromForm(form));
    if (!parsed.success) return formStateFromZod(parsed.error);
    id = (await createAnalysis(db, parsed.data, actor)).id;
  } catch (error) {
    return formStateFromError(error);
  }
  redirect(`/analyses/${id}`);
}
