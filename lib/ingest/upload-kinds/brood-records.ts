import { broodRecordRowSchema, type BroodRecordRow } from "../schemas/brood-record-row";
import { checkRow } from "../check-row";
import type { RecordReader } from "../record-reader";

/**
 * One brood record from a record of the file: the year from its column or from an ISO lay date,
 * dates converted to days of the year from 1 January, then the brood-record schema's checks.
 */
export function readBroodRecord(reader: RecordReader): BroodRecordRow | null {
  reader.checkSiteCode();
  let year = reader.wholeNumber("year", false);
  const layDate = reader.day("layDate", { year: year ?? null, whole: true, required: true });
  if (year === null && layDate?.yearOfDate) year = layDate.yearOfDate;
  const hatchDate = reader.day("hatchDate", { year: year ?? null, whole: true, required: false });
  const candidate = {
    year: year ?? undefined,
    femaleId: reader.text("femaleId", true) ?? undefined,
    layDateDoy: layDate?.dayOfYear,
    clutchSize: reader.wholeNumber("clutchSize", true) ?? undefined,
    hatchDateDoy: hatchDate === undefined ? undefined : (hatchDate?.dayOfYear ?? null),
    fledglings: reader.wholeNumber("fledglings", true) ?? undefined,
    recruits: reader.wholeNumber("recruits", true) ?? undefined,
  };
  for (const [schemaField, field] of [
    ["year", "year"],
    ["femaleId", "femaleId"],
    ["layDateDoy", "layDate"],
    ["clutchSize", "clutchSize"],
    ["hatchDateDoy", "hatchDate"],
    ["fledglings", "fledglings"],
    ["recruits", "recruits"],
  ] as const) {
    reader.trace(schemaField, field);
  }
  if (year === null && !reader.hasFailed("year") && !reader.hasFailed("layDate")) {
    reader.fail(reader.has("year") ? "year" : "layDate", "the row has no year: give one in the year column or write the lay date as YYYY-MM-DD");
  }
  return checkRow(broodRecordRowSchema, candidate, reader);
}
