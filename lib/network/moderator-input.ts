import { z } from "zod";

/** The moderator whose value is each site's own latitude (never stored as a ModeratorValue). */
export const LATITUDE_MODERATOR_KEY = "latitude";

export const moderatorKeySchema = z
  .string()
  .trim()
  .regex(/^[a-z][a-z0-9_]{0,47}$/, "moderator key must be 1-48 lower-case letters, digits or '_', starting with a letter");

export const moderatorKindSchema = z.enum(["numeric", "categorical"]);

/** A new site-level covariate for meta-regression. */
export const moderatorInputSchema = z.object({
  key: moderatorKeySchema.refine((key) => key !== LATITUDE_MODERATOR_KEY, "latitude is built in: every site has it already"),
  label: z.string().trim().min(1, "give the moderator a label").max(120),
  unit: z.string().trim().max(60).nullable().default(null).transform((unit) => (unit === "" ? null : unit)),
  kind: moderatorKindSchema,
  description: z.string().trim().min(1, "say what the moderator measures and how").max(4000),
});

export type ModeratorInput = z.output<typeof moderatorInputSchema>;

/** One site's value of a moderator: a number (with an optional standard error) or a category. */
export const moderatorValueInputSchema = z
  .object({
    numericValue: z.number().finite("value must be a finite number").nullable().default(null),
    categoricalValue: z.string().trim().min(1, "category must not be empty").max(120).nullable().default(null),
    standardError: z.number().finite().positive("standard error must be > 0").nullable().default(null),
    source: z.enum(["entered", "computed"]).default("entered"),
    method: z.string().trim().max(4000).nullable().default(null).transform((method) => (method === "" ? null : method)),
  })
  .superRefine((value, ctx) => {
    if ((value.numericValue === null) === (value.categoricalValue === null)) {
      ctx.addIssue({ code: "custom", path: ["numericValue"], message: "give exactly one of numericValue and categoricalValue" });
    }
    if (value.standardError !== null && value.numericValue === null) {
      ctx.addIssue({ code: "custom", path: ["standardError"], message: "a standard error needs a numeric value" });
    }
    if (value.source === "computed" && value.method === null) {
      ctx.addIssue({ code: "custom", path: ["method"], message: "say how a computed value was obtained (method)" });
    }
  });

export type ModeratorValueInput = z.output<typeof moderatorValueInputSchema>;
