import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { runAnalysis } from "@/lib/analyses/run-analysis";

export const POST = handleRoute(apiRoutes.runAnalysis, async ({ params, actor }) => runAnalysis(getDb(), params.id, actor));
