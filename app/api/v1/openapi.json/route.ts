import { handleRoute } from "@/lib/api/handle-route";
import { buildOpenApiDocument } from "@/lib/api/openapi";
import { apiRoutes } from "@/lib/api/routes";

export const GET = handleRoute(apiRoutes.openApi, async ({ request }) => buildOpenApiDocument(new URL(request.url).origin));
