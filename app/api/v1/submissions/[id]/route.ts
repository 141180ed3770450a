import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { getSubmission } from "@/lib/submissions/list-submissions";

export const GET = handleRoute(apiRoutes.getSubmission, async ({ params }) => getSubmission(getDb(), params.id));
