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
    // An empty text means "not given", the same as null.
    .transform((text) => (text === "" ? null : text));

export const dateConventionSchema = z.enum(["jan1", "apr1"]);

/** The site's own description, without defaults: shared by creation and by edits of a site. */
const siteMetadata = {
  name: z.string().trim().min(1, "site name must not be empty").max(200, "site name must be at most 200 characters"),
  latitude: z.number().finite().min(-90, "latitude must be -90..90 (decimal degrees)").max(90, "latitude must be -90..90 (decimal degrees)"),
  longitude: z.number().finite().min(-180, "longitude must be -180..180 (decimal degrees)").max(180, "longitude must be -180..180 (decimal degrees)"),
  elevationM: z.number().finite().min(-500, "elevation below -500 m").max(9000, "elevation above 9000 m").nullable(),
  habitat: optionalText(200),
  firstYear: studyYearSchema,
  lastYear: studyYearSchema,
  dateConvention: dateConventionSchema,
  notes: optionalText(4000),
};

function checkYears(site: { firstYear?: number; lastYear?: number }, ctx: z.RefinementCtx): void {
  if (site.firstYear !== undefined && site.lastYear !== undefined && site.lastYear < site.firstYear) {
    ctx.addIssue({ code: "custom", path: ["lastYear"], message: `last year ${site.lastYear} is before first year ${site.firstYear}` });
  }
}

/** A new study site: its species is named by scientific name (created when new, with its common name). */
export const siteInputSchema = z
  .object({
    code: siteCodeSchema,
    name: siteMetadata.name,
    species: z.object({
      scientificName: z.string().trim().min(3, "give the species' scientific name").max(200),
      commonName: z.string().trim().min(1, "give the species' common name").max(200),
    }),
    latitude: siteMetadata.latitude,
    longitude: siteMetadata.longitude,
    elevationM: siteMetadata.elevationM.default(null),
    habitat: siteMetadata.habitat.default(null),
    firstYear: siteMetadata.firstYear,
    lastYear: siteMetadata.lastYear,
    dateConvention: siteMetadata.dateConvention.default("jan1"),
    notes: siteMetadata.notes.default(null),
  })
  .superRefine(checkYears);

export type SiteInput = z.output<typeof siteInputSchema>;

/**
 * An edit of a site's metadata: only the fields given change (null clears an optional one). The
 * code (its name in URLs and files) and the species (which decides how it is pooled) stay as they
 * are. A new date convention applies to later uploads; rows already stored were converted on input.
 */
export const siteUpdateSchema = z
  .object(siteMetadata)
  .partial()
  .superRefine(checkYears)
  .refine((edit) => Object.keys(edit).length > 0, { message: "give at least one field to change", path: [] });

export type SiteUpdate = z.output<typeof siteUpdateSchema>;
