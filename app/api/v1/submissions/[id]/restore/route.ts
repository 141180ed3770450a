import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { restoreSubmission } from "@/lib/submissions/restore-submission";

export const POST = handleRoute(apiRoutes.restoreSubmission, async ({ params, body, actor }) =>
  restoreSubmission(getDb(), { submissionId: params.id, ...body }, actor),
);
