import { handleRoute } from "@/lib/api/handle-route";
import { presentSiteDetail } from "@/lib/api/present-site";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { AppError } from "@/lib/errors/app-error";
import { getSiteDetail } from "@/lib/network/site-detail";

export const GET = handleRoute(apiRoutes.getSite, async ({ params }) => {
  const detail = await getSiteDetail(getDb(), params.code);
  if (!detail) throw new AppError("not_found", `site code ${params.code} is not in this network`, [{ field: "path.code", message: "unknown site", value: params.code }]);
  return presentSiteDetail(detail);
});
