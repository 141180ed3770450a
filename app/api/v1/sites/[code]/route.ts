import { handleRoute } from "@/lib/api/handle-route";
import { presentSite, presentSiteDetail } from "@/lib/api/present-site";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { AppError } from "@/lib/errors/app-error";
import { getSiteDetail } from "@/lib/network/site-detail";
import { updateSite } from "@/lib/network/update-site";

export const GET = handleRoute(apiRoutes.getSite, async ({ params, may }) => {
  const detail = await getSiteDetail(getDb(), params.code);
  if (!detail) throw new AppError("not_found", `site code ${params.code} is not in this network`, [{ field: "path.code", message: "unknown site", value: params.code }]);
  const estimates = may("pooled_results.read", { siteId: detail.site.id });
  return presentSiteDetail(detail, estimates.allowed ? null : estimates.reason);
});

export const PATCH = handleRoute(apiRoutes.updateSite, async ({ params, body, actor }) => presentSite(await updateSite(getDb(), params.code, body, actor)));
