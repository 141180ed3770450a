import { createRandomStream, deriveSeed, type RandomStream } from "@/lib/stats/random/xoshiro128";
import type { RequestSample } from "./latency-summary";
import type { LoadNetwork } from "./load-network";
import { uploadFile, type UploadFile } from "./upload-files";

/**
 * The load test's clients: each loops until the deadline, choosing its next request from its own
 * seeded stream: an upload of a distinct valid file to its site (one in eight of them ten times the
 * site's size; sent again, up to three times in all, when refused with 409 because another
 * client's upload to the site came first), a page, an API list, or an analysis run. A client waits for each reply before
 * sending its next request, so `clients` requests are in flight at once.
 */
export interface SentUpload {
  siteCode: string;
  file: Omit<UploadFile, "csv">;
  /** The reply to each attempt (null: no reply). */
  statuses: (number | null)[];
  /** The stored submission's id, sha256 and row count as the 201 reply gave them. */
  acknowledged: { submissionId: number; sha256: string; rowCount: number } | null;
}

export interface LoadRun {
  samples: RequestSample[];
  uploads: SentUpload[];
  elapsedMs: number;
}

export interface LoadOptions {
  baseUrl: string;
  network: LoadNetwork;
  clients: number;
  durationMs: number;
  seed: number;
  /** A reply that takes longer than this counts as no reply. */
  requestTimeoutMs: number;
}

/** Request mix, as cumulative weights: uploads 12%, pages 30%, API lists 43%, analysis runs 15%. */
const MIX = [
  { kind: "upload", upTo: 0.12 },
  { kind: "page", upTo: 0.42 },
  { kind: "api list", upTo: 0.85 },
  { kind: "analysis run", upTo: 1 },
] as const;
const LARGE_UPLOAD_SHARE = 1 / 8;
const LARGE_UPLOAD_COPIES = 10;
const UPLOAD_ATTEMPTS = 3;

function pick<T>(random: RandomStream, items: readonly T[]): T {
  return items[random.nextInt(items.length)]!;
}

async function timed(kind: string, timeoutMs: number, send: (signal: AbortSignal) => Promise<Response>): Promise<{ sample: RequestSample; body: string | null }> {
  const started = performance.now();
  try {
    const response = await send(AbortSignal.timeout(timeoutMs));
    const body = await response.text();
    const sample: RequestSample = { kind, status: response.status, ms: performance.now() - started };
    if (response.status >= 400) sample.detail = body.slice(0, 300);
    return { sample, body };
  } catch (error) {
    const cause = (error as Error & { cause?: { code?: string; message?: string } }).cause;
    const detail = [(error as Error).message, cause?.code, cause?.message].filter(Boolean).join(": ");
    return { sample: { kind, status: null, ms: performance.now() - started, detail }, body: null };
  }
}

export async function runLoad(options: LoadOptions): Promise<LoadRun> {
  const { baseUrl, network } = options;
  const samples: RequestSample[] = [];
  const uploads: SentUpload[] = [];
  const started = performance.now();
  const deadline = started + options.durationMs;
  const coordinator = { authorization: `Bearer ${network.coordinatorToken}` };
  const pages = [
    "/",
    "/analyses",
    ...network.siteCodes.map((code) => `/sites/${code}`),
    ...network.analysisIds.map((id) => `/analyses/${id}`),
  ];
  const lists = [
    "/api/v1/sites",
    "/api/v1/analyses",
    ...network.siteCodes.flatMap((code) => [`/api/v1/submissions?site=${code}`, `/api/v1/estimates?site=${code}`, `/api/v1/brood-records?site=${code}&limit=500`]),
  ];

  const client = async (index: number) => {
    const random = createRandomStream(deriveSeed(options.seed, index));
    const home = network.uploadSites[index % network.uploadSites.length]!;
    let sequence = 0;
    while (performance.now() < deadline) {
      const draw = random.nextFloat();
      const kind = MIX.find((m) => draw < m.upTo)!.kind;
      if (kind === "upload") {
        sequence += 1;
        const large = random.nextFloat() < LARGE_UPLOAD_SHARE;
        const file = uploadFile(home.siteCode, home.broods, index, sequence, large ? LARGE_UPLOAD_COPIES : 1);
        const { csv: _csv, ...described } = file;
        const sent: SentUpload = { siteCode: home.siteCode, file: described, statuses: [], acknowledged: null };
        uploads.push(sent);
        // Another client's upload to the same site may be written between this one's check and its
        // write: the server then refuses it (409) and the client sends it again, as a person would.
        for (let attempt = 1; attempt <= UPLOAD_ATTEMPTS; attempt++) {
          const form = new FormData();
          form.set("file", new File([file.csv], file.fileName, { type: "text/csv" }));
          form.set("siteCode", home.siteCode);
          form.set("kind", "brood_records");
          const { sample, body } = await timed(large ? "upload (large)" : "upload", options.requestTimeoutMs, (signal) =>
            fetch(`${baseUrl}/api/v1/submissions`, { method: "POST", body: form, headers: { authorization: `Bearer ${home.leadToken}` }, signal }),
          );
          samples.push(sample);
          sent.statuses.push(sample.status);
          if (sample.status === 201 && body) {
            const reply = JSON.parse(body) as { submission: { id: number; sha256: string; rowCount: number } };
            sent.acknowledged = { submissionId: reply.submission.id, sha256: reply.submission.sha256, rowCount: reply.submission.rowCount };
          }
          if (sample.status !== 409) break;
        }
      } else if (kind === "page") {
        const path = pick(random, pages);
        const { sample } = await timed(kind, options.requestTimeoutMs, (signal) => fetch(`${baseUrl}${path}`, { headers: { cookie: network.sessionCookie }, redirect: "manual", signal }));
        // A page that sends a signed-in reader elsewhere is a failure too.
        if (sample.status !== null && sample.status >= 300 && sample.status < 400) sample.detail = `redirected from ${path}`;
        samples.push(sample);
      } else if (kind === "api list") {
        const path = pick(random, lists);
        samples.push((await timed(kind, options.requestTimeoutMs, (signal) => fetch(`${baseUrl}${path}`, { headers: coordinator, signal }))).sample);
      } else {
        const id = pick(random, network.analysisIds);
        samples.push(
          (await timed(kind, options.requestTimeoutMs, (signal) => fetch(`${baseUrl}/api/v1/analyses/${id}/runs`, { method: "POST", headers: coordinator, signal }))).sample,
        );
      }
    }
  };

  await Promise.all(Array.from({ length: options.clients }, (_, i) => client(i)));
  return { samples, uploads, elapsedMs: performance.now() - started };
}
