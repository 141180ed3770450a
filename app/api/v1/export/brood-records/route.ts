import { csvResponse } from "@/lib/api/file-response";
import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { broodRecordsCsv } from "@/lib/export/record-csv";
import { listBroodRecords } from "@/lib/network/list-brood-records";

export const GET = handleRoute(apiRoutes.exportBroodRecords, async ({ query: { format, ...filter }, siteScope }) => {
  const { items } = await listBroodRecords(getDb(), filter, siteScope);
  return format === "csv" ? csvResponse(broodRecordsCsv(items), "phenopool-brood-records.csv") : items;
});
