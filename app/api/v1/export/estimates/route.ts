import { csvResponse } from "@/lib/api/file-response";
import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { estimatesCsv } from "@/lib/export/record-csv";
import { listEstimates } from "@/lib/network/list-estimates";

export const GET = handleRoute(apiRoutes.exportEstimates, async ({ query: { format, ...filter } }) => {
  const { items } = await listEstimates(getDb(), filter);
  return format === "csv" ? csvResponse(estimatesCsv(items), "phenopool-estimates.csv") : items;
});
