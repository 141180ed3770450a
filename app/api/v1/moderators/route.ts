import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { createModerator, listModerators } from "@/lib/network/moderators";

export const GET = handleRoute(apiRoutes.listModerators, async () => ({ items: await listModerators(getDb()) }));

export const POST = handleRoute(apiRoutes.createModerator, async ({ body, actor }) => createModerator(getDb(), body, actor));
