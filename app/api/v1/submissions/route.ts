import { handleRoute } from "@/lib/api/handle-route";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { listSubmissions } from "@/lib/submissions/list-submissions";
import { submitJsonRows } from "@/lib/submissions/submit-json-rows";
import { acceptUploadForm } from "@/lib/submissions/upload-form";

export const GET = handleRoute(apiRoutes.listSubmissions, async ({ query }) => ({ items: await listSubmissions(getDb(), query) }));

export const POST = handleRoute(apiRoutes.createSubmission, async ({ form, body, actor }) => {
  // A file upload's form was read (to find its site) before authorization; otherwise the JSON body was parsed.
  const result = form ? await acceptUploadForm(getDb(), form, actor) : await submitJsonRows(getDb(), body, actor);
  // Nothing new was stored for content identical to the current submission: 200, not 201.
  return result.unchanged ? Response.json(result, { status: 200 }) : result;
});
