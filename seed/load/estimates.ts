import type { Db } from "../../lib/db/client";
import { writeSubmission } from "../../lib/submissions/write-submission";
import type { SimulatedSiteData } from "../simulate/types";
import { submissionFile } from "./submission-file";

const FIELDS = ["outcome", "level", "term", "year", "value", "standardError", "n", "scale", "link", "method"] as const;

/** Uploads an estimates-only site's per-year estimates through the ordinary submission path; returns rows written. */
export async function loadUploadedEstimates(db: Db, data: SimulatedSiteData, submittedById: number): Promise<number> {
  if (data.uploadedEstimates.length === 0) return 0;
  const file = submissionFile(`${data.site.code}-estimates.csv`, FIELDS, data.uploadedEstimates.map((e) => ({ ...e })));
  const result = await writeSubmission(db, { siteCode: data.site.code, kind: "estimates", ...file, submittedById });
  return result.rowCount;
}
