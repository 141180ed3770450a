import type { Db } from "../../lib/db/client";
import { writeSubmission } from "../../lib/submissions/write-submission";
import type { SimulatedSiteData } from "../simulate/types";
import { submissionFile } from "./submission-file";

const FIELDS = ["year", "femaleId", "layDateDoy", "clutchSize", "hatchDateDoy", "fledglings", "recruits"] as const;

/** Uploads a raw-data site's brood records (all years, one file) through the ordinary submission path; returns rows written. */
export async function loadBroodRecords(db: Db, data: SimulatedSiteData, submittedById: number): Promise<number> {
  if (data.broods.length === 0) return 0;
  const file = submissionFile(`${data.site.code}-brood-records.csv`, FIELDS, data.broods.map((b) => ({ ...b })));
  const result = await writeSubmission(db, { siteCode: data.site.code, kind: "brood_records", ...file, submittedById });
  return result.rowCount;
}
