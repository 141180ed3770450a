import { csvResponse } from "@/lib/api/file-response";
import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { getAnalysisRun } from "@/lib/analyses/run-analysis";
import { analysisCoefficientsCsv, analysisStudiesCsv } from "@/lib/export/record-csv";

export const GET = handleRoute(apiRoutes.exportAnalysisRun, async ({ params, query }) => {
  const run = await getAnalysisRun(getDb(), null, params.runId);
  if (query.format === "json") return run;
  const csv = query.table === "studies" ? analysisStudiesCsv(run) : analysisCoefficientsCsv(run);
  return csvResponse(csv, `phenopool-run-${run.id}-${query.table}.csv`);
});
