import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { listSubmissions } from "@/lib/submissions/list-submissions";
import { submitJsonRows } from "@/lib/submissions/submit-json-rows";

export const GET = handleRoute(apiRoutes.listSubmissions, async ({ query }) => ({ items: await listSubmissions(getDb(), query) }));

export const POST = handleRoute(apiRoutes.createSubmission, async ({ body, actor }) => {
  const result = await submitJsonRows(getDb(), body, actor);
  // Nothing new was stored for rows identical to the current submission: 200, not 201.
  return result.unchanged ? Response.json(result, { status: 200 }) : result;
});
