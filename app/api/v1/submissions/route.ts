import { handleRoute } from "@/lib/api/handle-route";
import { readFormData } from "@/lib/api/request-input";
import { apiRoutes } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { listSubmissions } from "@/lib/submissions/list-submissions";
import { submitJsonRows } from "@/lib/submissions/submit-json-rows";
import { acceptUploadForm } from "@/lib/submissions/upload-form";

export const GET = handleRoute(apiRoutes.listSubmissions, async ({ query }) => ({ items: await listSubmissions(getDb(), query) }));

export const POST = handleRoute(apiRoutes.createSubmission, async ({ request, body, actor }) => {
  // A JSON body has been parsed by the route definition; otherwise the request is a file upload form.
  const result = body ? await submitJsonRows(getDb(), body, actor) : await acceptUploadForm(getDb(), await readFormData(request), actor);
  // Nothing new was stored for content identical to the current submission: 200, not 201.
  return result.unchanged ? Response.json(result, { status: 200 }) : result;
});
