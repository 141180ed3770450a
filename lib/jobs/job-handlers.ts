import type { JobHandlers } from "./job-runner";
import { RECOMPUTE_SITE_ESTIMATES, recomputeSiteEstimatesJob } from "./recompute-site-estimates-job";
import { RUN_ANALYSIS, runAnalysisJob } from "./run-analysis-job";

/** Every kind of background job and its handler. */
export const JOB_HANDLERS: JobHandlers = {
  [RECOMPUTE_SITE_ESTIMATES]: recomputeSiteEstimatesJob,
  [RUN_ANALYSIS]: runAnalysisJob,
};
