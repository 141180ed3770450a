import type { ProposedMapping } from "./column-mapping";
import type { SubmissionKindName } from "./schemas/vocabulary";
import { UPLOAD_FIELDS } from "./upload-fields";

/**
 * Columns of an uploaded file that PhenoPool does not read, said out loud: a heading no field is
 * mapped to ("hatching day" meant as the hatch date), or a column without a heading that holds
 * values. Their cells are not stored, which the user must be told before and after accepting,
 * with how to have them read.
 */

/** Something about an upload that does not stop it but that the user should know. */
export interface UploadWarning {
  code: "unused_columns" | "unheaded_columns";
  message: string;
}

/** A column with an empty heading and its count of non-empty cells. */
export interface UnheadedColumn {
  /** 1 = the file's first column. */
  column: number;
  rowsWithValues: number;
}

const quoted = (headings: readonly string[]) => headings.map((h) => `"${h}"`).join(", ");

/**
 * The warnings for the columns a scan found but does not read: one for the headings no field is
 * mapped to (naming each and the fields still without a column), one for unheaded columns that
 * hold values. Empty when every column is read.
 *
 * Example: unreadColumnWarnings("brood_records", { ..., unusedHeadings: ["hatching day"] }, [])
 * gives one unused_columns warning: 'the column "hatching day" was not read: ... fields without a
 * column: site code (siteCode), year (year), hatch date (hatchDate) ...'.
 */
export function unreadColumnWarnings(kind: SubmissionKindName, proposal: ProposedMapping | null, unheaded: readonly UnheadedColumn[]): UploadWarning[] {
  const warnings: UploadWarning[] = [];
  const unused = proposal?.unusedHeadings ?? [];
  if (unused.length) {
    const free = UPLOAD_FIELDS[kind].filter((f) => proposal!.mapping[f.name] === undefined);
    const one = unused.length === 1;
    warnings.push({
      code: "unused_columns",
      message:
        `${one ? "the column" : "the columns"} ${quoted(unused)} ${one ? "was" : "were"} not read: no field is mapped to ${one ? "it" : "them"}, so ${one ? "its" : "their"} values are not stored. ` +
        (free.length
          ? `To read ${one ? "it" : "one"}, map a field to ${one ? "its" : "the"} heading in the column mapping (field -> heading; fields without a column: ${free.map((f) => `${f.label} (${f.name})`).join(", ")}) and upload again.`
          : `Every field of a ${kind} upload already has a column, so there is no field left to read ${one ? "it" : "them"} into.`),
    });
  }
  const withValues = unheaded.filter((c) => c.rowsWithValues > 0);
  if (withValues.length) {
    const described = withValues.map((c) => `column ${c.column} (values in ${c.rowsWithValues} row${c.rowsWithValues === 1 ? "" : "s"})`).join(", ");
    warnings.push({
      code: "unheaded_columns",
      message: `${described} ${withValues.length === 1 ? "has" : "have"} no heading, so ${withValues.length === 1 ? "its" : "their"} values were not read. Give ${withValues.length === 1 ? "it" : "each"} a heading and map a field to it to have the values read.`,
    });
  }
  return warnings;
}
