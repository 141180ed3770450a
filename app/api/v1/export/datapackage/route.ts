import { fileResponse } from "@/lib/api/file-response";
import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { exportDataPackage } from "@/lib/export/data-package";
import { packageToZip } from "@/lib/export/package-archive";

export const GET = handleRoute(apiRoutes.exportDataPackage, async () => {
  const { files } = await exportDataPackage(getDb());
  return fileResponse(packageToZip(files), "application/zip", `phenopool-network-${new Date().toISOString().slice(0, 10)}.zip`);
});
