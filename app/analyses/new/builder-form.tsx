"use client";

import { useActionState, useState } from "react";
import { createAnalysisAction } from "./actions";
import { EMPTY_FORM_STATE } from "../../_server/form-state";
import { FormMessage } from "../../_components/form-message";

export interface BuilderOptions {
  moderators: { key: string; label: string; unit: string | null; kind: "numeric" | "categorical"; siteCount: number }[];
  species: { scientificName: string; commonName: string }[];
}

const OUTCOMES: [string, string][] = [
  ["recruitment", "Local recruitment"],
  ["fledging_failure", "Fledging failure"],
  ["fledglings_successful", "Fledglings among successful broods"],
  ["recruits_per_female", "Recruits per female"],
  ["selection_gradient", "Selection gradient"],
];

const LEVELS: [string, string][] = [
  ["species", "Species"],
  ["site", "Site"],
  ["estimate", "Estimate (site-year, for one estimate per site and year)"],
];

export function BuilderForm({ options }: { options: BuilderOptions }) {
  const [state, action, pending] = useActionState(createAnalysisAction, EMPTY_FORM_STATE);
  const [model, setModel] = useState("random_effects");
  const [outcome, setOutcome] = useState("recruitment");
  const [permute, setPermute] = useState(false);
  const [levels, setLevels] = useState<string[]>([]);
  const multilevel = levels.length > 0;
  const toggleLevel = (level: string, on: boolean) => setLevels((current) => LEVELS.map(([value]) => value).filter((value) => (value === level ? on : current.includes(value))));
  return (
    <form action={action} className="builder" aria-label="Analysis builder">
      <FormMessage state={state} />
      <fieldset>
        <legend>Name</legend>
        <label htmlFor="name">Analysis name</label>
        <input id="name" name="name" required maxLength={200} />
        <label htmlFor="description">Description (optional)</label>
        <textarea id="description" name="description" rows={2} maxLength={4000} />
      </fieldset>
      <fieldset>
        <legend>What to pool</legend>
        <label htmlFor="outcome">Outcome</label>
        <select id="outcome" name="outcome" value={outcome} onChange={(e) => setOutcome(e.target.value)}>
          {OUTCOMES.map(([value, label]) => <option key={value} value={value}>{label}</option>)}
        </select>
        <label htmlFor="level">Level</label>
        <select id="level" name="level" defaultValue="within_year">
          <option value="within_year">Within-year (individual) effect</option>
          <option value="between_year">Between-year (annual mean) effect</option>
        </select>
        <label htmlFor="term">Term</label>
        <select id="term" name="term" defaultValue="linear">
          <option value="linear">Linear</option>
          <option value="quadratic">Quadratic</option>
        </select>
        <label htmlFor="scale">Scale</label>
        <select id="scale" name="scale" key={outcome} defaultValue={outcome === "selection_gradient" ? "per_sd" : "per_day"}>
          <option value="per_day">Per day of mismatch</option>
          <option value="per_sd">Per SD of lay date</option>
        </select>
        <label htmlFor="grain">Estimates</label>
        <select id="grain" name="grain" defaultValue="site">
          <option value="site">One per site (all years)</option>
          <option value="site_year">One per site and year</option>
        </select>
        <label htmlFor="source">Source</label>
        <select id="source" name="source" defaultValue="any">
          <option value="any">Computed here, or the site&apos;s own</option>
          <option value="computed">Computed here from brood records</option>
          <option value="uploaded">Uploaded by the sites</option>
        </select>
      </fieldset>
      <fieldset>
        <legend>Model</legend>
        <label htmlFor="model">Model</label>
        <select id="model" name="model" value={model} onChange={(e) => setModel(e.target.value)}>
          <option value="random_effects">Random effects</option>
          <option value="common_effect">Common effect (inverse variance)</option>
        </select>
        {model === "random_effects" ? (
          <>
            <label htmlFor="tau2Estimator">Between-site variance (tau²) estimator</label>
            <select id="tau2Estimator" name="tau2Estimator" defaultValue="reml">
              <option value="reml">Restricted maximum likelihood (REML)</option>
              <option value="ml">Maximum likelihood (ML)</option>
              <option value="dl">DerSimonian-Laird</option>
              <option value="pm">Paule-Mandel</option>
              <option value="he">Hedges</option>
              <option value="sj">Sidik-Jonkman</option>
            </select>
            {multilevel ? (
              <>
                <input type="hidden" name="test" value="z" />
                <p className="muted">A multilevel model uses Wald z tests; for small-sample tests choose cluster-robust standard errors below.</p>
              </>
            ) : (
              <>
                <label htmlFor="test">Test and intervals</label>
                <select id="test" name="test" defaultValue="hksj">
                  <option value="hksj">Knapp-Hartung (t, adjusted variance)</option>
                  <option value="z">Wald z</option>
                </select>
              </>
            )}
          </>
        ) : (
          <input type="hidden" name="test" value="z" />
        )}
        <label htmlFor="confidenceLevel">Confidence level</label>
        <select id="confidenceLevel" name="confidenceLevel" defaultValue="0.95">
          <option value="0.9">90%</option>
          <option value="0.95">95%</option>
          <option value="0.99">99%</option>
        </select>
      </fieldset>
      <fieldset>
        <legend>Moderators (meta-regression)</legend>
        {options.moderators.map((m) => (
          <label key={m.key} className="check">
            <input type="checkbox" name="moderators" value={m.key} /> {m.label}
            {m.unit ? ` (${m.unit})` : ""} <span className="muted">{m.kind}, {m.siteCount} sites</span>
          </label>
        ))}
      </fieldset>
      <fieldset>
        <legend>Multilevel model and robust standard errors</legend>
        <p className="muted">Nested random effects, one variance per level (random effects, REML or ML). Leave all unticked for a single-level model.</p>
        {LEVELS.map(([value, label]) => (
          <label key={value} className="check">
            <input type="checkbox" name="levels" value={value} checked={levels.includes(value)} onChange={(e) => toggleLevel(value, e.target.checked)} /> {label}
          </label>
        ))}
        <label htmlFor="robustCluster">Cluster-robust (CR2) standard errors</label>
        <select id="robustCluster" name="robustCluster" defaultValue="">
          <option value="">none (model-based)</option>
          <option value="site">clustered by site</option>
          <option value="species">clustered by species</option>
        </select>
      </fieldset>
      <fieldset>
        <legend>Permutation test</legend>
        <label className="check">
          <input type="checkbox" name="permutationTest" checked={permute} onChange={(e) => setPermute(e.target.checked)} /> Test the moderators by permuting them across sites (Higgins &amp; Thompson 2004)
        </label>
        {permute ? (
          <>
            <label htmlFor="permutations">Number of permutations</label>
            <input id="permutations" name="permutations" type="number" min={100} max={100000} step={100} defaultValue={1000} required />
            <label htmlFor="permutationSeed">Seed</label>
            <input id="permutationSeed" name="permutationSeed" type="number" min={1} max={2147483647} defaultValue={1} required />
          </>
        ) : null}
        <p className="muted">Needs at least one moderator. An analysis with a permutation test runs in the background, with a progress bar and a cancel button on its page.</p>
      </fieldset>
      <fieldset>
        <legend>Subsets</legend>
        <p className="muted">Leave everything empty to pool all sites and species.</p>
        {options.species.map((s) => (
          <label key={s.scientificName} className="check">
            <input type="checkbox" name="species" value={s.scientificName} /> {s.commonName} <span className="species">({s.scientificName})</span>
          </label>
        ))}
        <label htmlFor="sites">Site codes (comma-separated)</label>
        <input id="sites" name="sites" placeholder="all sites" />
        <label htmlFor="yearFrom">From year (site-year estimates)</label>
        <input id="yearFrom" name="yearFrom" type="number" min={1900} max={2100} />
        <label htmlFor="yearTo">To year (site-year estimates)</label>
        <input id="yearTo" name="yearTo" type="number" min={1900} max={2100} />
      </fieldset>
      <button type="submit" disabled={pending}>{pending ? "Saving…" : "Save analysis"}</button>
    </form>
  );
}
