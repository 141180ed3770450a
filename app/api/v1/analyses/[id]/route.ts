import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { getAnalysis } from "@/lib/analyses/analyses";

export const GET = handleRoute(apiRoutes.getAnalysis, async ({ params }) => getAnalysis(getDb(), params.id));
