"use client";

import { useActionState, useEffect, useState } from "react";
import { useRouter } from "next/navigation";
import { cancelJobAction, pollJobsAction, type JobScopeInput } from "../_server/job-actions";
import { EMPTY_FORM_STATE } from "../_server/form-state";
import { FormMessage } from "./form-message";
import type { JobSummary } from "@/lib/jobs/job-scope";

const POLL_MS = 1000;
const KIND_WORDS: Record<string, string> = { recompute_site_estimates: "Recomputing the site's estimates", run_analysis: "Running the analysis" };

function active(job: JobSummary): boolean {
  return job.status === "queued" || job.status === "running";
}

function CancelButton({ jobId }: { jobId: number }) {
  const [state, action, pending] = useActionState(cancelJobAction, EMPTY_FORM_STATE);
  return (
    <form action={action} className="inline-form" aria-label={`Cancel job ${jobId}`}>
      <input type="hidden" name="jobId" value={jobId} />
      <button type="submit" className="quiet" disabled={pending}>{pending ? "Cancelling…" : "Cancel"}</button>
      <FormMessage state={state} />
    </form>
  );
}

/**
 * A scope's background jobs with a progress bar each, polled every second while any is queued or
 * running; when they are all done the page is refreshed to show their results. The rest of the
 * page stays usable: polling is a small request off the page's own work.
 */
export function JobProgress({ scope, initial, canCancel, resultHref }: { scope: JobScopeInput; initial: JobSummary[]; canCancel: boolean; resultHref?: string }) {
  const [jobs, setJobs] = useState(initial);
  const [error, setError] = useState<string | null>(null);
  const router = useRouter();
  const anyActive = jobs.some(active);
  useEffect(() => {
    if (!anyActive || error) return;
    const timer = setTimeout(() => {
      void pollJobsAction(scope).then((next) => {
        if (next.error) {
          setError(next.error);
          return;
        }
        setJobs(next.jobs);
        if (!next.jobs.some(active)) router.refresh();
      });
    }, POLL_MS);
    return () => clearTimeout(timer);
  }, [jobs, anyActive, error, scope, router]);
  if (jobs.length === 0) return null;
  return (
    <section className="jobs" aria-label="Background work" aria-live="polite">
      {jobs.map((job) => {
        const words = KIND_WORDS[job.kind] ?? job.kind;
        const percent = Math.round(job.progress * 100);
        return (
          <div key={job.id} className={`job job-${job.status}`}>
            {active(job) ? (
              <>
                <span className="job-title">{words} (job {job.id}): {job.status === "queued" ? "waiting to start" : `${percent}%`}</span>
                <progress max={1} value={job.status === "queued" ? undefined : job.progress} aria-label={`${words}, job ${job.id}`} />
                {job.message ? <span className="muted">{job.message}</span> : null}
                {canCancel ? <CancelButton jobId={job.id} /> : null}
              </>
            ) : (
              <span className="muted">
                Last background job {job.id} ({words.toLowerCase()}): {job.status}
                {job.message ? ` — ${job.message}` : ""}
                {job.runId !== null && resultHref ? <> · <a href={`${resultHref}${job.runId}`}>open run {job.runId}</a></> : null}
              </span>
            )}
          </div>
        );
      })}
      {error ? <p className="form-error" role="alert">Progress is not updating: {error}</p> : null}
    </section>
  );
}
