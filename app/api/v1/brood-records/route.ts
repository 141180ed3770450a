import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { listBroodRecords } from "@/lib/network/list-brood-records";

export const GET = handleRoute(apiRoutes.listBroodRecords, async ({ query: { limit, offset, ...filter }, siteScope }) => ({
  ...(await listBroodRecords(getDb(), filter, siteScope, { limit, offset })),
  limit,
  offset,
}));
