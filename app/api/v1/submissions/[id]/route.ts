import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { getSubmission } from "@/lib/submissions/list-submissions";
import { withdrawSubmission } from "@/lib/submissions/withdraw-submission";

export const GET = handleRoute(apiRoutes.getSubmission, async ({ params }) => getSubmission(getDb(), params.id));

export const DELETE = handleRoute(apiRoutes.withdrawSubmission, async ({ params, actor }) => {
  const result = await withdrawSubmission(getDb(), params.id, actor);
  return { submission: await getSubmission(getDb(), result.submissionId), reinstatedId: result.reinstatedId, recomputeJobId: result.job?.id ?? null };
});
