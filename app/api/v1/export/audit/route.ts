import { csvResponse } from "@/lib/api/file-response";
import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { auditCsv } from "@/lib/audit/audit-csv";
import { listAuditEntries } from "@/lib/audit/list-audit";

export const GET = handleRoute(apiRoutes.exportAudit, async ({ query: { format, ...filter }, actor }) => {
  const entries = await listAuditEntries(getDb(), actor, filter);
  return format === "csv" ? csvResponse(auditCsv(entries), `phenopool-audit-${new Date().toISOString().slice(0, 10)}.csv`) : entries;
});
