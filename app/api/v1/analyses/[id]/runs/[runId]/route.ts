import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { getAnalysisRun } from "@/lib/analyses/run-analysis";

export const GET = handleRoute(apiRoutes.getAnalysisRun, async ({ params }) => getAnalysisRun(getDb(), params.id, params.runId));
