import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { listEstimates } from "@/lib/network/list-estimates";

export const GET = handleRoute(apiRoutes.listEstimates, async ({ query: { limit, offset, ...filter } }) => ({
  ...(await listEstimates(getDb(), filter, { limit, offset })),
  limit,
  offset,
}));
