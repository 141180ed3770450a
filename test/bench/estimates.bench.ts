/**
 * Speed of the per-site estimates: 1,000,000 brood records (25 sites x 40 years x 1,000 broods)
 * through every GLM (site-level and per-year, four outcomes) and between-year fit, without the
 * bootstrap; then one site's selection-gradient bootstrap (B = 1000, 5,000 broods). When Rscript
 * is on the PATH, R's glm/lm run the same models on the same data and the ratio is printed.
 * Targets: under 5 s and under 10 s.
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { computeSiteEstimates } from "@/lib/estimates/compute-site-estimates";
import type { BroodForEstimates } from "@/lib/estimates/estimate-types";
import { createRandomStream, deriveSeed, type RandomStream } from "@/lib/stats/random/xoshiro128";
import { fitSelectionGradients } from "@/lib/stats/selection/fit-selection-gradients";

const SITES = 25;
const YEARS = 40;
const BROODS_PER_YEAR = 1000;

function normal(random: RandomStream): number {
  // Box-Muller; one of the pair is enough here.
  return Math.sqrt(-2 * Math.log(1 - random.nextFloat())) * Math.cos(2 * Math.PI * random.nextFloat());
}

function bernoulli(random: RandomStream, p: number): number {
  return random.nextFloat() < p ? 1 : 0;
}

/** One simulated site: broods with a quadratic mismatch effect on failure and recruitment. */
function benchmarkSite(seed: number, years: number, broodsPerYear: number): { broods: BroodForEstimates[]; peaks: Map<number, number> } {
  const random = createRandomStream(seed);
  const broods: BroodForEstimates[] = [];
  const peaks = new Map<number, number>();
  for (let y = 0; y < years; y += 1) {
    const year = 1981 + y;
    const peak = Math.round(140 + 6 * normal(random));
    peaks.set(year, peak);
    const meanLay = peak - 27 + 5 * normal(random);
    for (let b = 0; b < broodsPerYear; b += 1) {
      const lay = Math.round(meanLay + 6 * normal(random));
      const c = lay - meanLay;
      const failed = bernoulli(random, 1 / (1 + Math.exp(-(-1.6 + 0.03 * c + 0.003 * c * c))));
      const clutch = 7 + Math.floor(5 * random.nextFloat());
      let fledglings = 0;
      if (!failed) for (let k = 0; k < clutch; k += 1) fledglings += bernoulli(random, 0.85);
      fledglings = failed ? 0 : Math.max(1, fledglings);
      let recruits = 0;
      const pRecruit = 1 / (1 + Math.exp(-(-2.5 - 0.03 * c - 0.002 * c * c)));
      for (let k = 0; k < fledglings; k += 1) recruits += bernoulli(random, pRecruit);
      broods.push({ year, femaleId: `F${year}-${b}`, layDateDoy: lay, hatchDateDoy: null, clutchSize: clutch, fledglings, recruits });
    }
  }
  return { broods, peaks };
}

function seconds(start: bigint): number {
  return Number(process.hrtime.bigint() - start) / 1e9;
}

function rscriptAvailable(): boolean {
  try {
    execFileSync("Rscript", ["--version"], { stdio: "ignore" });
    return true;
  } catch {
    return false;
  }
}

const R_PIPELINE = String.raw`
args <- commandArgs(TRUE)
d <- read.csv(args[1])
tight <- glm.control(epsilon = 1e-10, maxit = 50)
started <- proc.time()[["elapsed"]]
for (s in unique(d$site)) {
  ds <- d[d$site == s, ]
  ds$m <- ds$lay_date + 30 - ds$food_peak
  ds$am <- ave(ds$m, ds$year)
  ds$c <- ds$m - ds$am
  for (o in 1:4) {
    x <- ds
    if (o == 1) { x$y <- as.numeric(x$fledglings == 0); fam <- binomial() }
    if (o == 2) { x <- x[x$fledglings >= 1, ]; x$y <- x$fledglings; fam <- quasipoisson() }
    if (o == 3) { x$y <- as.numeric(x$recruits >= 1); fam <- binomial() }
    if (o == 4) { x$y <- x$recruits; fam <- quasipoisson() }
    f <- suppressWarnings(glm(y ~ factor(year) + c + I(c^2), family = fam, data = x, control = tight))
    for (yy in unique(x$year)) {
      xy <- x[x$year == yy, ]
      if (nrow(xy) >= 20 && length(unique(xy$y)) > 1) fy <- suppressWarnings(glm(y ~ c + I(c^2), family = fam, data = xy, control = tight))
    }
    a <- aggregate(cbind(y, am, one = 1) ~ year, data = x, FUN = sum)
    between <- lm(I(y / one) ~ I(am / one), data = a, weights = one)
  }
}
cat(proc.time()[["elapsed"]] - started, "\n")
`;

export async function runEstimatesBenchmark(): Promise<void> {
  const sites = Array.from({ length: SITES }, (_, k) => benchmarkSite(deriveSeed(20260, k), YEARS, BROODS_PER_YEAR));
  const records = sites.reduce((sum, site) => sum + site.broods.length, 0);

  let estimates = 0;
  let refused = 0;
  const glmStart = process.hrtime.bigint();
  for (const site of sites) {
    const result = computeSiteEstimates(site.broods, site.peaks, { selectionGradients: false });
    estimates += result.estimates.length;
    refused += result.refused.length;
  }
  const glmSeconds = seconds(glmStart);

  const bootstrapSite = benchmarkSite(deriveSeed(20261, 0), 5, 1000);
  const bootstrapStart = process.hrtime.bigint();
  const selection = fitSelectionGradients(
    { year: bootstrapSite.broods.map((b) => b.year), trait: bootstrapSite.broods.map((b) => b.layDateDoy), fitness: bootstrapSite.broods.map((b) => b.recruits) },
    { bootstrapReplicates: 1000, seed: 1 },
  );
  const bootstrapSeconds = seconds(bootstrapStart);

  let rSeconds: number | null = null;
  if (rscriptAvailable()) {
    const dir = mkdtempSync(join(tmpdir(), "phenopool-bench-"));
    try {
      const lines = ["site,year,lay_date,fledglings,recruits,food_peak"];
      sites.forEach((site, k) => {
        for (const b of site.broods) lines.push(`${k},${b.year},${b.layDateDoy},${b.fledglings},${b.recruits},${site.peaks.get(b.year)}`);
      });
      writeFileSync(join(dir, "broods.csv"), lines.join("\n"));
      writeFileSync(join(dir, "pipeline.R"), R_PIPELINE);
      rSeconds = Number(execFileSync("Rscript", [join(dir, "pipeline.R"), join(dir, "broods.csv")], { encoding: "utf8", maxBuffer: 1 << 20 }).trim());
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }

  const rows = [
    ["step", "data", "seconds", "target", "result"],
    ["all GLMs + between-year fits", `${records.toLocaleString("en")} broods, ${SITES} sites`, glmSeconds.toFixed(2), "< 5", `${estimates} estimates, ${refused} refused`],
    ["selection bootstrap", `${bootstrapSite.broods.length} broods, B = 1000`, bootstrapSeconds.toFixed(2), "< 10", `beta ${selection.beta.estimate.toFixed(3)} (SE ${selection.beta.standardError.toFixed(3)})`],
    [
      "R glm/lm, same GLM models",
      `${records.toLocaleString("en")} broods`,
      rSeconds === null ? "n/a" : rSeconds.toFixed(2),
      "",
      rSeconds === null ? "Rscript not found" : `R / PhenoPool = ${(rSeconds / glmSeconds).toFixed(1)}x`,
    ],
  ];
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  console.log("\nEstimates from brood records");
  for (const r of rows) console.log(r.map((cell, j) => cell.padEnd(widths[j]!)).join("  "));
  const failed = [glmSeconds >= 5 ? "GLMs over 5 s" : null, bootstrapSeconds >= 10 ? "bootstrap over 10 s" : null].filter(Boolean);
  if (failed.length) console.log(`TARGET MISSED: ${failed.join(", ")}`);
}
