"use server";

import { getDb } from "@/lib/db/client";
import { AppError } from "@/lib/errors/app-error";
import { uploadSourceFromBytes } from "@/lib/ingest/upload-source";
import { problemsToCsv } from "@/lib/ingest/upload-problem";
import { previewUpload, type UploadPreview } from "@/lib/submissions/preview-upload";
import { acceptUpload, type AcceptUploadResult } from "@/lib/submissions/accept-upload";
import { requireActionActor } from "../../../_server/current-actor";
import { formStateFromError, type FormState } from "../../../_server/form-state";

export type PreviewState = FormState & { preview: (UploadPreview & { problemsCsv: string }) | null };
export type AcceptState = FormState & { accepted: AcceptUploadResult | null };

const field = (form: FormData, name: string): string | undefined => {
  const value = form.get(name);
  return typeof value === "string" && value.trim() !== "" ? value.trim() : undefined;
};

/** The upload form's fields as an upload request (validated again by the use case's schema). */
function uploadRequest(form: FormData) {
  const mapping: Record<string, string> = {};
  for (const [key, value] of form.entries()) {
    if (key.startsWith("map:") && typeof value === "string" && value !== "") mapping[key.slice(4)] = value;
  }
  const delimiter = field(form, "delimiter");
  return {
    siteCode: field(form, "siteCode") ?? "",
    kind: (field(form, "kind") ?? "brood_records") as "brood_records",
    decimalComma: form.get("decimalComma") === "on",
    ...(delimiter ? { delimiter: delimiter as "," } : {}),
    ...(field(form, "sheet") ? { sheet: field(form, "sheet") } : {}),
    ...(Object.keys(mapping).length ? { mapping } : {}),
  };
}

async function authorizedSource(form: FormData) {
  const db = getDb();
  const siteCode = field(form, "siteCode") ?? "";
  const site = await db.site.findUnique({ where: { code: siteCode }, select: { id: true } });
  if (!site) throw new AppError("not_found", `site code ${siteCode} is not in this network`);
  const actor = await requireActionActor("submission.create", { siteId: site.id });
  const file = form.get("file");
  if (!(file instanceof File) || file.size === 0) throw new AppError("invalid_input", "choose a file to upload", [{ field: "file", message: "no file chosen" }]);
  return { db, actor, source: uploadSourceFromBytes(file.name || "upload", new Uint8Array(await file.arrayBuffer())) };
}

/** Reads and checks the file; writes nothing. */
export async function previewUploadAction(_previous: PreviewState, form: FormData): Promise<PreviewState> {
  try {
    const { db, source } = await authorizedSource(form);
    const preview = await previewUpload(db, source, uploadRequest(form));
    return { message: null, fieldErrors: [], preview: { ...preview, problemsCsv: problemsToCsv(preview.problems, preview.totals) } };
  } catch (error) {
    return { ...formStateFromError(error), preview: null };
  }
}

/** Accepts the previewed file whole, or nothing (refused when the file or the site's data changed since the preview). */
export async function acceptUploadAction(_previous: AcceptState, form: FormData): Promise<AcceptState> {
  try {
    const { db, actor, source } = await authorizedSource(form);
    const expectedCurrent = field(form, "expectedCurrentSubmissionId");
    const accepted = await acceptUpload(
      db,
      source,
      {
        ...uploadRequest(form),
        ...(field(form, "expectedSha256") ? { expectedSha256: field(form, "expectedSha256") } : {}),
        ...(expectedCurrent !== undefined ? { expectedCurrentSubmissionId: expectedCurrent === "none" ? null : Number(expectedCurrent) } : {}),
      },
      actor,
    );
    return { message: null, fieldErrors: [], accepted };
  } catch (error) {
    return { ...formStateFromError(error), accepted: null };
  }
}
