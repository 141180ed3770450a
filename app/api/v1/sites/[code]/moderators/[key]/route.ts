import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { setModeratorValue } from "@/lib/network/moderators";

export const PUT = handleRoute(apiRoutes.setModeratorValue, async ({ params, body, actor }) => setModeratorValue(getDb(), params.code, params.key, body, actor));
