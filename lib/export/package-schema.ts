/**
 * The network as a Frictionless Data Package (Data Package and Table Schema v1,
 * https://specs.frictionlessdata.io): one tabular resource per table, each with its Table Schema
 * (field types, units in the descriptions, primary and foreign keys). Rows refer to each other by
 * natural keys (site code, user email, species name, moderator key, analysis name, a submission's
 * "SITE/kind/sequence"), never by database ids, so a package imported into another database means
 * the same thing.
 */
import { estimateLevelSchema, estimateScaleSchema, estimateTermSchema, linkFunctionSchema, outcomeSchema, submissionKindSchema } from "../ingest/schemas/vocabulary";

export type PackageFieldType = "string" | "integer" | "number" | "boolean" | "datetime" | "object";

export interface PackageField {
  name: string;
  type: PackageFieldType;
  description: string;
  /** A value must be present (not the empty cell). */
  required?: boolean;
  enum?: readonly string[];
}

export interface PackageForeignKey {
  fields: string[];
  /** resource "" refers to the same resource (Table Schema's self-reference). */
  reference: { resource: string; fields: string[] };
}

export interface PackageResourceSchema {
  name: string;
  title: string;
  description: string;
  fields: readonly PackageField[];
  primaryKey: readonly string[];
  foreignKeys: readonly PackageForeignKey[];
}

/** Timestamps: ISO 8601 in UTC with milliseconds, e.g. 2024-03-01T09:30:00.000Z. */
export const DATETIME_FORMAT = "%Y-%m-%dT%H:%M:%S.%fZ";

const text = (name: string, description: string, required = true): PackageField => ({ name, type: "string", description, required });
const optionalText = (name: string, description: string): PackageField => text(name, description, false);
const integer = (name: string, description: string, required = true): PackageField => ({ name, type: "integer", description, required });
const number = (name: string, description: string, required = true): PackageField => ({ name, type: "number", description, required });
const timestamp = (name: string, description: string): PackageField => ({ name, type: "datetime", description, required: true });
const choice = (name: string, values: readonly string[], description: string): PackageField => ({ name, type: "string", description, required: true, enum: values });
const json = (name: string, description: string): PackageField => ({ name, type: "object", description: `${description} (JSON text)`, required: true });
const reference = (fields: string[], resource: string, referenced: string[] = fields): PackageForeignKey => ({ fields, reference: { resource, fields: referenced } });

const siteRef = text("site", "Site code (sites.code).");
const submissionRef = text("submission", "The submission the row belongs to (submissions.submission).");

export const PACKAGE_RESOURCES: readonly PackageResourceSchema[] = [
  {
    name: "users",
    title: "People",
    description: "People named as site leads, submitters or analysis authors. Passwords, sessions and API tokens are never exported.",
    fields: [
      text("email", "E-mail address; identifies the person."),
      text("displayName", "Name shown in the workbench."),
      choice("role", ["coordinator", "site_lead", "viewer"], "Role in the network."),
      { name: "active", type: "boolean", description: "False for a removed account, kept so history still names it.", required: true },
      timestamp("createdAt", "When the account was created (UTC)."),
    ],
    primaryKey: ["email"],
    foreignKeys: [],
  },
  {
    name: "species",
    title: "Species",
    description: "Species studied in the network.",
    fields: [text("scientificName", "Scientific (Latin) name."), text("commonName", "English common name.")],
    primaryKey: ["scientificName"],
    foreignKeys: [],
  },
  {
    name: "sites",
    title: "Sites",
    description: "Study sites: one nest-box population of one species each.",
    fields: [
      text("code", "Site code."),
      text("name", "Site name."),
      text("species", "Scientific name of the species studied (species.scientificName)."),
      number("latitude", "Latitude, decimal degrees (WGS84), -90..90."),
      number("longitude", "Longitude, decimal degrees (WGS84), -180..180."),
      number("elevationM", "Elevation in metres above sea level.", false),
      optionalText("habitat", "Habitat in words."),
      integer("firstYear", "First study year."),
      integer("lastYear", "Last study year."),
      choice("dateConvention", ["jan1", "apr1"], "How the site writes its dates in uploads: jan1 (1 = 1 January) or apr1 (1 = 1 April). Dates in this package are always days of year with 1 = 1 January."),
      optionalText("leadUser", "E-mail of the site lead (users.email)."),
      optionalText("notes", "Notes."),
      timestamp("createdAt", "When the site was added (UTC)."),
      timestamp("updatedAt", "When the site record last changed (UTC)."),
    ],
    primaryKey: ["code"],
    foreignKeys: [reference(["species"], "species", ["scientificName"]), reference(["leadUser"], "users", ["email"])],
  },
  {
    name: "moderators",
    title: "Moderators",
    description: "Site-level covariates for meta-regression. Latitude is built in: its value is each site's latitude.",
    fields: [
      text("key", "Moderator key."),
      text("label", "Label."),
      optionalText("unit", "Unit of the values."),
      choice("kind", ["numeric", "categorical"], "Numeric or categorical."),
      text("description", "What the moderator measures and how."),
      { name: "builtIn", type: "boolean", description: "Built into PhenoPool (latitude).", required: true },
    ],
    primaryKey: ["key"],
    foreignKeys: [],
  },
  {
    name: "moderator-values",
    title: "Moderator values",
    description: "Each site's value of each moderator (latitude excepted: it is sites.latitude).",
    fields: [
      text("moderator", "Moderator key (moderators.key)."),
      siteRef,
      number("numericValue", "Value of a numeric moderator, in the moderator's unit.", false),
      optionalText("categoricalValue", "Level of a categorical moderator."),
      number("standardError", "Standard error of a computed value, in the moderator's unit.", false),
      choice("source", ["entered", "computed"], "Entered by hand or computed."),
      optionalText("method", "How a computed value was obtained."),
    ],
    primaryKey: ["moderator", "site"],
    foreignKeys: [reference(["moderator"], "moderators", ["key"]), reference(["site"], "sites", ["code"])],
  },
  {
    name: "submissions",
    title: "Submissions",
    description:
      "Provenance: every file (or JSON body) a site submitted, current (accepted) and superseded. A site's current data of a kind are the rows of its accepted submission of that kind.",
    fields: [
      text("submission", "Key: site code, kind and sequence, e.g. OAK/brood_records/2."),
      siteRef,
      choice("kind", submissionKindSchema.options, "What the submission holds."),
      integer("sequence", "1 for the site's first submission of this kind, then 2, 3, ... in order of submission."),
      text("fileName", "Name of the submitted file."),
      text("sha256", "SHA-256 of the submitted bytes, lower-case hex."),
      integer("rowCount", "Data rows in the submission."),
      optionalText("submittedBy", "E-mail of the submitter (users.email)."),
      timestamp("submittedAt", "When it was submitted (UTC)."),
      choice("status", ["accepted", "superseded", "withdrawn"], "accepted: the site's current submission of its kind; superseded: an earlier one, kept; withdrawn: deleted by its site's lead or the coordinator, kept for the record."),
      optionalText("supersedes", "The submission this one replaced (submissions.submission)."),
    ],
    primaryKey: ["submission"],
    foreignKeys: [reference(["site"], "sites", ["code"]), reference(["submittedBy"], "users", ["email"]), reference(["supersedes"], "", ["submission"])],
  },
  {
    name: "site-years",
    title: "Site-year covariates",
    description: "Covariates of each site and year, as submitted.",
    fields: [
      submissionRef,
      siteRef,
      integer("year", "Study year."),
      number("foodPeakDoy", "Date of the caterpillar food peak, day of year (1 = 1 January).", false),
      number("foodPeakSe", "Standard error of the food-peak date, days.", false),
      number("meanSpringTempC", "Mean spring temperature, degrees Celsius.", false),
      integer("broodCount", "Number of broods the site reports for the year.", false),
    ],
    primaryKey: ["submission", "year"],
    foreignKeys: [reference(["submission"], "submissions"), reference(["site"], "sites", ["code"])],
  },
  {
    name: "brood-records",
    title: "Brood records",
    description: "One row per brood, as submitted.",
    fields: [
      submissionRef,
      siteRef,
      integer("year", "Study year."),
      text("femaleId", "The female's ring or id at the site."),
      integer("layDateDoy", "First egg date, day of year (1 = 1 January)."),
      integer("clutchSize", "Eggs laid."),
      integer("hatchDateDoy", "Hatch date, day of year (1 = 1 January).", false),
      integer("fledglings", "Young fledged."),
      integer("recruits", "Fledglings later found breeding in the study population."),
    ],
    primaryKey: ["submission", "year", "femaleId"],
    foreignKeys: [reference(["submission"], "submissions"), reference(["site"], "sites", ["code"])],
  },
  {
    name: "estimates",
    title: "Estimates",
    description: "Effect estimates of mismatch: uploaded by sites, or computed from their brood records.",
    fields: [
      text("estimate", "Key: site code and the estimate's place in the site's list, e.g. OAK/12."),
      siteRef,
      optionalText("submission", "The submission the estimate came from or was computed from (submissions.submission)."),
      choice("outcome", outcomeSchema.options, "Fitness outcome."),
      choice("level", estimateLevelSchema.options, "within_year or between_year."),
      choice("term", estimateTermSchema.options, "linear or quadratic term of mismatch."),
      integer("year", "Study year; empty for a site-level estimate.", false),
      number("value", "The estimate, on the link scale named in link, per unit named in scale."),
      number("standardError", "Standard error of the estimate, same units."),
      integer("n", "Broods (or years) the estimate rests on."),
      choice("scale", estimateScaleSchema.options, "per_day: per day of mismatch; per_sd: per standard deviation of lay date."),
      choice("link", linkFunctionSchema.options, "Link function of the model: logit, log or identity."),
      choice("source", ["computed", "uploaded"], "Computed by PhenoPool or uploaded by the site."),
      text("method", "How the value was obtained, in words."),
      timestamp("createdAt", "When the estimate was stored (UTC)."),
    ],
    primaryKey: ["estimate"],
    foreignKeys: [reference(["site"], "sites", ["code"]), reference(["submission"], "submissions")],
  },
  {
    name: "analyses",
    title: "Analyses",
    description: "Saved meta-analysis specifications.",
    fields: [
      text("name", "Analysis name."),
      json("specification", "What is pooled, with which model, test, moderators and subsets"),
      optionalText("createdBy", "E-mail of the author (users.email)."),
      timestamp("createdAt", "When it was saved (UTC)."),
      timestamp("updatedAt", "When it last changed (UTC)."),
    ],
    primaryKey: ["name"],
    foreignKeys: [reference(["createdBy"], "users", ["email"])],
  },
  {
    name: "analysis-runs",
    title: "Analysis runs",
    description: "Stored fits of the analyses, with the fingerprint of the data they read.",
    fields: [
      text("analysis", "Analysis name (analyses.name)."),
      integer("sequence", "1 for the analysis's first run, then 2, 3, ..."),
      text("dataFingerprint", "SHA-256 over the submissions, estimates and moderator values the run read."),
      text("engineVersion", "PhenoPool version that fitted the run."),
      json("result", "The stored result: specification, pooled studies and fitted model"),
      timestamp("createdAt", "When the run was fitted (UTC)."),
    ],
    primaryKey: ["analysis", "sequence"],
    foreignKeys: [reference(["analysis"], "analyses", ["name"])],
  },
  {
    name: "network-settings",
    title: "Network settings",
    description: "Network-wide settings (e.g. the mismatch offset in days).",
    fields: [text("key", "Setting name."), text("value", "Value as JSON text."), timestamp("updatedAt", "When it last changed (UTC).")],
    primaryKey: ["key"],
    foreignKeys: [],
  },
  {
    name: "column-mappings",
    title: "Remembered column mappings",
    description: "Each site's mapping from its own column headings to PhenoPool's fields, per kind of upload.",
    fields: [
      siteRef,
      choice("kind", submissionKindSchema.options, "Kind of upload."),
      json("mapping", "PhenoPool field name -> the site's heading"),
      timestamp("updatedAt", "When it last changed (UTC)."),
    ],
    primaryKey: ["site", "kind"],
    foreignKeys: [reference(["site"], "sites", ["code"])],
  },
];

export const PACKAGE_DESCRIPTION =
  "A PhenoPool network: sites, species, moderators, every submission with its provenance, the brood records, site-year covariates and estimates they hold, analyses and their runs. " +
  "Dates are days of year with 1 = 1 January. CSV files are UTF-8, comma-separated, with a header row; an empty cell is a missing value. " +
  "A text cell that would start with =, +, -, @, a tab or a carriage return (after any leading apostrophes) carries one extra leading apostrophe, so that spreadsheets do not run it as a formula; remove that one apostrophe to get the value.";

/** The CSV file of a resource inside the package. */
export const resourcePath = (name: string) => `data/${name}.csv`;

/** datapackage.json for these resources; `created` is the export time. */
export function dataPackageDescriptor(created: Date, engineVersion: string) {
  return {
    profile: "tabular-data-package",
    name: "phenopool-network",
    title: "PhenoPool network",
    description: PACKAGE_DESCRIPTION,
    created: created.toISOString(),
    sources: [{ title: `PhenoPool ${engineVersion}` }],
    resources: PACKAGE_RESOURCES.map((resource) => ({
      profile: "tabular-data-resource",
      name: resource.name,
      path: resourcePath(resource.name),
      title: resource.title,
      description: resource.description,
      format: "csv",
      mediatype: "text/csv",
      encoding: "utf-8",
      dialect: { delimiter: ",", lineTerminator: "\r\n", quoteChar: '"', doubleQuote: true, header: true },
      schema: {
        fields: resource.fields.map((field) => ({
          name: field.name,
          type: field.type,
          ...(field.type === "datetime" ? { format: DATETIME_FORMAT } : {}),
          description: field.description,
          constraints: { required: field.required === true, ...(field.enum ? { enum: [...field.enum] } : {}) },
        })),
        missingValues: [""],
        primaryKey: [...resource.primaryKey],
        ...(resource.foreignKeys.length ? { foreignKeys: resource.foreignKeys.map((fk) => ({ fields: [...fk.fields], reference: { ...fk.reference, fields: [...fk.reference.fields] } })) } : {}),
      },
    })),
  };
}
