import { z } from "zod";
import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { AppError } from "../errors/app-error";
import { uploadSourceFromFile } from "../ingest/upload-source";
import type { UploadWarning } from "../ingest/unread-columns";
import { delimiterSchema } from "../ingest/read-upload-table";
import { submissionKindSchema } from "../ingest/schemas/vocabulary";
import { acceptUpload } from "./accept-upload";
import { getSubmission } from "./list-submissions";
import type { SubmissionWriteReply } from "./submit-json-rows";

/**
 * A file upload sent as multipart/form-data: the file and, as text fields, what acceptUpload's
 * request names (site, kind, delimiter, decimal comma, sheet, column mapping as JSON, and the
 * previewed SHA-256 and current submission to refuse a change since the preview).
 */
export const uploadFormSchema = z.object({
  file: z.string().describe("The file (CSV, TSV or .xlsx).").meta({ format: "binary" }),
  siteCode: z.string(),
  kind: submissionKindSchema,
  delimiter: delimiterSchema.optional(),
  decimalComma: z.enum(["true", "false"]).optional(),
  sheet: z.string().optional(),
  mapping: z.string().optional().describe("JSON object: PhenoPool field -> the file's heading."),
  expectedSha256: z.string().optional(),
  expectedCurrentSubmissionId: z.string().optional(),
});

/**
 * A received upload form: its text fields by name and its file, already on disk (the API streams
 * the file part to a temporary file; see lib/api/multipart-upload.ts).
 */
export interface UploadFormInput {
  fields: ReadonlyMap<string, string>;
  file: { path: string; fileName: string; byteCount: number } | null;
}

/** The reply to an accepted upload form: the stored submission, and the file's columns that were not read. */
export interface UploadFormReply extends SubmissionWriteReply {
  /** The file's headings that no field reads: their columns were not stored. */
  unusedHeadings: string[];
  warnings: UploadWarning[];
}

const text = (form: UploadFormInput, name: string): string | undefined => {
  const value = form.fields.get(name);
  return value !== undefined && value.trim() !== "" ? value : undefined;
};

/**
 * Accepts an uploaded file from a form (see acceptUpload: checked in full first, then written whole
 * or not at all), read from its file on disk. Throws AppError invalid_input for a missing file or
 * a malformed field, and whatever acceptUpload throws (every problem of the file, not_found,
 * conflict, too_large).
 */
export async function acceptUploadForm(db: Db, form: UploadFormInput, actor: Actor): Promise<UploadFormReply> {
  const file = form.file;
  // A browser sends an empty, unnamed file part when no file was chosen.
  if (!file || (file.fileName === "" && file.byteCount === 0)) {
    throw new AppError("invalid_input", "attach the file as the form field 'file'", [{ field: "file", message: "required" }]);
  }
  const fileName = file.fileName || "upload";
  let mapping: unknown;
  const mappingText = text(form, "mapping");
  if (mappingText !== undefined) {
    try {
      mapping = JSON.parse(mappingText);
    } catch {
      throw new AppError("invalid_input", "mapping must be a JSON object", [{ field: "mapping", message: "not JSON", value: mappingText }]);
    }
  }
  const expectedCurrent = text(form, "expectedCurrentSubmissionId");
  const decimalComma = text(form, "decimalComma");
  const result = await acceptUpload(
    db,
    uploadSourceFromFile(file.path, fileName),
    {
      siteCode: text(form, "siteCode") ?? "",
      kind: text(form, "kind") as "brood_records",
      ...(text(form, "delimiter") !== undefined ? { delimiter: text(form, "delimiter") as "," } : {}),
      ...(decimalComma !== undefined ? { decimalComma: decimalComma === "true" } : {}),
      ...(text(form, "sheet") !== undefined ? { sheet: text(form, "sheet") } : {}),
      ...(mapping !== undefined ? { mapping: mapping as Record<string, string> } : {}),
      ...(text(form, "expectedSha256") !== undefined ? { expectedSha256: text(form, "expectedSha256") } : {}),
      ...(expectedCurrent !== undefined ? { expectedCurrentSubmissionId: expectedCurrent === "null" ? null : Number(expectedCurrent) } : {}),
    },
    actor,
  );
  return {
    submission: await getSubmission(db, result.submissionId),
    supersededId: result.supersededId,
    unchanged: result.unchanged,
    recomputeJobId: result.job?.id ?? null,
    unusedHeadings: result.unusedHeadings,
    warnings: result.warnings,
  };
}
