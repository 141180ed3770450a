import { handleRoute } from "@/lib/api/handle-route";
import { presentSite } from "@/lib/api/present-site";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { createSite } from "@/lib/network/create-site";
import { listSiteSummaries, networkTotals } from "@/lib/network/site-summaries";

export const GET = handleRoute(apiRoutes.listSites, async () => {
  const items = await listSiteSummaries(getDb());
  return { items, totals: networkTotals(items) };
});

export const POST = handleRoute(apiRoutes.createSite, async ({ body, actor }) => presentSite(await createSite(getDb(), body, actor)));
