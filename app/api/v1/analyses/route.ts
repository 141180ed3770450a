import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { createAnalysis, listAnalyses } from "@/lib/analyses/analyses";

export const GET = handleRoute(apiRoutes.listAnalyses, async () => ({ items: await listAnalyses(getDb()) }));

export const POST = handleRoute(apiRoutes.createAnalysis, async ({ body, actor }) => createAnalysis(getDb(), body, actor));
