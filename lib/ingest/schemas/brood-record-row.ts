import { z } from "zod";
import { dayOfYearSchema, isLeapYear, studyYearSchema } from "./vocabulary";

const count = (what: string) => z.number().int(`${what} must be a whole number`).min(0, `${what} must be 0 or more`);

/** One brood: dates are days of year (1 = 1 January), already converted from the site's convention. */
export const broodRecordRowSchema = z
  .object({
    year: studyYearSchema,
    femaleId: z.string().trim().min(1, "female id must not be empty").max(64, "female id must be at most 64 characters"),
    layDateDoy: dayOfYearSchema.int("lay date must be a whole day of the year"),
    clutchSize: count("clutch size").min(1, "clutch size must be at least 1").max(30, "clutch size must be at most 30"),
    hatchDateDoy: dayOfYearSchema.int("hatch date must be a whole day of the year").nullable().default(null),
    fledglings: count("fledglings"),
    recruits: count("recruits"),
  })
  .superRefine((row, ctx) => {
    if (row.fledglings > row.clutchSize) {
      ctx.addIssue({ code: "custom", path: ["fledglings"], message: `fledglings ${row.fledglings} exceeds clutch size ${row.clutchSize}` });
    }
    if (row.recruits > row.fledglings) {
      ctx.addIssue({ code: "custom", path: ["recruits"], message: `recruits ${row.recruits} exceeds fledglings ${row.fledglings}` });
    }
    for (const field of ["layDateDoy", "hatchDateDoy"] as const) {
      const day = row[field];
      if (day === 366 && !isLeapYear(row.year)) {
        ctx.addIssue({ code: "custom", path: [field], message: `day 366 does not exist in ${row.year}` });
      }
    }
    if (row.hatchDateDoy !== null && row.hatchDateDoy <= row.layDateDoy) {
      ctx.addIssue({ code: "custom", path: ["hatchDateDoy"], message: `hatch date ${row.hatchDateDoy} is not after lay date ${row.layDateDoy}` });
    }
  });

export type BroodRecordRow = z.infer<typeof broodRecordRowSchema>;
