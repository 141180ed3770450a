import type { SubmissionKindName } from "./schemas/vocabulary";

/**
 * The columns an uploaded file of each kind can have, as PhenoPool names them. A site maps its own
 * headings to these once; `aliases` are headings matched without being told (after normalising:
 * case, accents, spaces and punctuation do not count).
 */
export interface UploadField {
  name: string;
  label: string;
  /** Whether every file must have a column for it (rules across fields are checked when mapping). */
  required: boolean;
  description: string;
  aliases: string[];
}

const siteCode: UploadField = {
  name: "siteCode",
  label: "site code",
  required: false,
  description: "The site's code; when given, every row must name the site the file is uploaded for.",
  aliases: ["site", "site code", "site id", "population", "study site"],
};

const year: UploadField = {
  name: "year",
  label: "year",
  required: false,
  description: "Breeding year (1900-2100); may be left out when the dates are ISO dates (YYYY-MM-DD), which carry their year.",
  aliases: ["yr", "season", "breeding year", "study year"],
};

export const BROOD_RECORD_FIELDS: readonly UploadField[] = [
  siteCode,
  year,
  {
    name: "femaleId",
    label: "female",
    required: true,
    description: "The female's ring or identifier, as the site records it.",
    aliases: ["female", "female id", "female ring", "ring", "mother", "bird id", "female code"],
  },
  {
    name: "layDate",
    label: "lay date",
    required: true,
    description: "First egg date: an ISO date (YYYY-MM-DD) or a day of the year in the site's convention.",
    aliases: ["lay date", "laying date", "first egg date", "first egg", "lay doy", "laydate doy", "fed"],
  },
  {
    name: "clutchSize",
    label: "clutch size",
    required: true,
    description: "Number of eggs (1-30).",
    aliases: ["clutch", "clutch size", "eggs", "cs", "number of eggs"],
  },
  {
    name: "hatchDate",
    label: "hatch date",
    required: false,
    description: "Hatching date, as the lay date; may be empty.",
    aliases: ["hatch date", "hatching date", "hatch", "hatch doy"],
  },
  {
    name: "fledglings",
    label: "fledglings",
    required: true,
    description: "Young fledged (0 to the clutch size).",
    aliases: ["fledged", "fledglings", "number fledged", "n fledged", "fledgling number"],
  },
  {
    name: "recruits",
    label: "recruits",
    required: true,
    description: "Fledglings later found breeding in the population (0 to the fledglings).",
    aliases: ["recruits", "recruited", "local recruits", "n recruits"],
  },
];

export const SITE_YEAR_FIELDS: readonly UploadField[] = [
  siteCode,
  year,
  {
    name: "foodPeakDate",
    label: "food-peak date",
    required: false,
    description: "Date of the caterpillar food peak: ISO date or day of the year (fractions allowed).",
    aliases: ["food peak", "food peak date", "food peak doy", "peak date", "caterpillar peak", "peak"],
  },
  {
    name: "foodPeakSe",
    label: "food-peak SE",
    required: false,
    description: "Standard error of the food-peak date, in days.",
    aliases: ["food peak se", "peak se", "food peak standard error"],
  },
  {
    name: "meanSpringTempC",
    label: "mean spring temperature (C)",
    required: false,
    description: "Mean spring temperature in degrees Celsius.",
    aliases: ["mean spring temperature", "spring temperature", "spring temp", "mean temp", "temperature", "mean spring temp c"],
  },
  {
    name: "broodCount",
    label: "brood count",
    required: false,
    description: "Number of broods the site reports for the year.",
    aliases: ["brood count", "broods", "number of broods", "n broods"],
  },
  {
    name: "sampleDate",
    label: "frass sample date",
    required: false,
    description: "For a frass-fall series: the sampling date (ISO date or day of the year). One row per sample.",
    aliases: ["sample date", "sampling date", "frass date", "date"],
  },
  {
    name: "frassMass",
    label: "frass mass per trap per day",
    required: false,
    description: "For a frass-fall series: frass mass per trap per day (any unit, the same throughout).",
    aliases: ["frass", "frass mass", "frass fall", "frass per trap per day", "frass mass per trap per day", "frass mg"],
  },
];

export const ESTIMATE_FIELDS: readonly UploadField[] = [
  siteCode,
  { name: "outcome", label: "outcome", required: true, description: "fledging_failure, fledglings_successful, recruitment, recruits_per_female or selection_gradient.", aliases: ["response"] },
  { name: "level", label: "level", required: true, description: "within_year or between_year.", aliases: ["estimate level"] },
  { name: "term", label: "term", required: true, description: "linear or quadratic.", aliases: ["model term"] },
  { name: "year", label: "year", required: false, description: "The year of a per-year estimate; empty for a site-level one.", aliases: ["yr", "season"] },
  { name: "estimate", label: "estimate", required: true, description: "The estimate, on the link scale.", aliases: ["value", "coefficient", "coef", "beta", "slope", "effect"] },
  {
    name: "standardError",
    label: "standard error",
    required: false,
    description: "Its standard error. Give exactly one of standard error, variance, or a 95% interval.",
    aliases: ["se", "std error", "std err", "stderr", "standard error", "s e"],
  },
  { name: "variance", label: "variance", required: false, description: "Its sampling variance (instead of the standard error).", aliases: ["var", "sampling variance"] },
  {
    name: "ciLower",
    label: "95% CI lower",
    required: false,
    description: "Lower end of its 95% confidence interval on the link scale (with the upper end, instead of the standard error).",
    aliases: ["ci lower", "lower", "lower ci", "lcl", "ci low", "lower 95", "lower 95 ci", "ci lo"],
  },
  {
    name: "ciUpper",
    label: "95% CI upper",
    required: false,
    description: "Upper end of its 95% confidence interval on the link scale.",
    aliases: ["ci upper", "upper", "upper ci", "ucl", "ci high", "upper 95", "upper 95 ci", "ci hi"],
  },
  { name: "n", label: "n", required: true, description: "Number of broods (or females) behind the estimate.", aliases: ["sample size", "n broods", "number of broods"] },
  { name: "scale", label: "scale", required: true, description: "per_day or per_sd.", aliases: ["estimate scale", "units"] },
  { name: "link", label: "link", required: true, description: "logit, log or identity.", aliases: ["link function"] },
  { name: "method", label: "method", required: true, description: "How the estimate was obtained (model, definitions, SE method).", aliases: ["methods", "model", "notes"] },
];

export const UPLOAD_FIELDS: Record<SubmissionKindName, readonly UploadField[]> = {
  brood_records: BROOD_RECORD_FIELDS,
  site_year_covariates: SITE_YEAR_FIELDS,
  estimates: ESTIMATE_FIELDS,
};

/** A heading reduced to what identifies it: "Lay Date (DOY)", "lay_date_doy" and "LAYDATE-doy" all become "laydatedoy". */
export function normaliseHeading(heading: string): string {
  return heading
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "");
}
