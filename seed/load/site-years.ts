import type { Db } from "../../lib/db/client";
import { writeSubmission } from "../../lib/submissions/write-submission";
import type { SimulatedSiteData } from "../simulate/types";
import { submissionFile } from "./submission-file";

const FIELDS = ["year", "foodPeakDoy", "foodPeakSe", "meanSpringTempC", "broodCount"] as const;

/** Uploads a raw-data site's site-year covariates through the ordinary submission path; returns rows written. */
export async function loadSiteYears(db: Db, data: SimulatedSiteData, submittedById: number): Promise<number> {
  if (data.siteYears.length === 0) return 0;
  const file = submissionFile(`${data.site.code}-site-years.csv`, FIELDS, data.siteYears.map((y) => ({ ...y })));
  const result = await writeSubmission(db, { siteCode: data.site.code, kind: "site_year_covariates", ...file, submittedById });
  return result.rowCount;
}
