import { z } from "zod";
import { studyYearSchema } from "../ingest/schemas/vocabulary";

/** A site code as used in URLs, file names and exports: letters, digits, '-' and '_'. */
export const siteCodeSchema = z
  .string()
  .trim()
  .min(1, "site code must not be empty")
  .max(32, "site code must be at most 32 characters")
  .regex(/^[A-Za-z0-9][A-Za-z0-9_-]*$/, "site code may hold only letters, digits, '-' and '_', and must start with a letter or digit");

const optionalText = (max: number) =>
  z
    .string()
    .trim()
    .max(max, `must be at most ${max} characters`)
    .nullable()
    .default(null)
    // An empty text means "not given", the same as null.
    .transform((text) => (text === "" ? null : text));

export const dateConventionSchema = z.enum(["jan1", "apr1"]);

/** A new study site: its species is named by scientific name (created when new, with its common name). */
export const siteInputSchema = z
  .object({
    code: siteCodeSchema,
    name: z.string().trim().min(1, "site name must not be empty").max(200, "site name must be at most 200 characters"),
    species: z.object({
      scientificName: z.string().trim().min(3, "give the species' scientific name").max(200),
      commonName: z.string().trim().min(1, "give the species' common name").max(200),
    }),
    latitude: z.number().finite().min(-90, "latitude must be -90..90 (decimal degrees)").max(90, "latitude must be -90..90 (decimal degrees)"),
    longitude: z.number().finite().min(-180, "longitude must be -180..180 (decimal degrees)").max(180, "longitude must be -180..180 (decimal degrees)"),
    elevationM: z.number().finite().min(-500, "elevation below -500 m").max(9000, "elevation above 9000 m").nullable().default(null),
    habitat: optionalText(200),
    firstYear: studyYearSchema,
    lastYear: studyYearSchema,
    dateConvention: dateConventionSchema.default("jan1"),
    notes: optionalText(4000),
  })
  .superRefine((site, ctx) => {
    if (site.lastYear < site.firstYear) {
      ctx.addIssue({ code: "custom", path: ["lastYear"], message: `last year ${site.lastYear} is before first year ${site.firstYear}` });
    }
  });

export type SiteInput = z.output<typeof siteInputSchema>;
