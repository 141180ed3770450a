import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { createServer } from "node:net";
import { chromium, type Browser, type Page } from "playwright-core";
import { afterAll, beforeAll } from "vitest";

/**
 * End-to-end harness: the production build served on loopback against its own SQLite file,
 * driven by Debian's Chromium through playwright-core. Screenshots go to test-artifacts/e2e/.
 */
export const CHROMIUM = process.env.PHENOPOOL_CHROMIUM ?? "/usr/bin/chromium";
export const ARTIFACTS = join(process.cwd(), "test-artifacts", "e2e");

export interface DemoAccount {
  role: string;
  email: string;
  password: string;
}

export interface RunningApp {
  baseUrl: string;
  databaseUrl: string;
  /** The seeded demo accounts (empty without the demo network). */
  accounts: DemoAccount[];
  stop: () => Promise<void>;
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.listen(0, "127.0.0.1", () => {
      const address = server.address();
      server.close(() => (typeof address === "object" && address ? resolve(address.port) : reject(new Error("no port"))));
    });
  });
}

async function waitForHttp(url: string, child: ChildProcess, timeoutMs: number): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`the server exited with code ${child.exitCode} before answering`);
    try {
      const response = await fetch(url, { redirect: "manual" });
      if (response.status < 500) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`the server did not answer at ${url} within ${timeoutMs} ms`);
}

function runToEnd(command: string, args: string[], env: NodeJS.ProcessEnv): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { env, stdio: ["ignore", "ignore", "pipe"] });
    let stderr = "";
    child.stderr?.on("data", (c: Buffer) => (stderr += c.toString()));
    child.on("close", (code) => (code === 0 ? resolve() : reject(new Error(`${command} ${args.join(" ")} failed (${code}): ${stderr}`))));
  });
}

export interface RunningServer {
  baseUrl: string;
  /** The server process (its pid is what a crash test kills). */
  child: ChildProcess;
  /** Everything the server printed so far. */
  output: () => string;
  /** Sends `signal` to the server and its job process and resolves once the server has exited. */
  kill: (signal: NodeJS.Signals) => Promise<void>;
}

/**
 * Starts `next start` (the build in .next must exist: run `next build` first) on loopback against
 * `databaseUrl`, with `env` added to the environment, and resolves once it answers.
 */
export async function startServer(options: { databaseUrl: string; env?: Record<string, string> }): Promise<RunningServer> {
  if (!existsSync(join(process.cwd(), ".next", "BUILD_ID"))) throw new Error("no production build: run `npx next build` before the end-to-end tests");
  const env: NodeJS.ProcessEnv = { ...process.env, ...options.env, DATABASE_URL: options.databaseUrl, NODE_ENV: "production" as const };
  const port = await freePort();
  // Its own process group, so a kill reaches the server and the job process it started at once.
  const child = spawn(process.execPath, ["node_modules/next/dist/bin/next", "start", "--hostname", "127.0.0.1", "--port", String(port)], { env, stdio: ["ignore", "pipe", "pipe"], detached: true });
  let output = "";
  child.stdout?.on("data", (c: Buffer) => (output += c.toString()));
  child.stderr?.on("data", (c: Buffer) => (output += c.toString()));
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  const signalGroup = (signal: NodeJS.Signals) => {
    try {
      process.kill(-child.pid!, signal);
    } catch {
      // the group has already gone
    }
  };
  const onExit = () => signalGroup("SIGKILL");
  process.once("exit", onExit);
  const kill = async (signal: NodeJS.Signals) => {
    signalGroup(signal);
    await exited;
    process.off("exit", onExit);
  };
  const baseUrl = `http://127.0.0.1:${port}`;
  try {
    await waitForHttp(`${baseUrl}/sign-in`, child, 60_000);
  } catch (error) {
    await kill("SIGKILL");
    throw new Error(`${(error as Error).message}\n${output}`);
  }
  return { baseUrl, child, output: () => output, kill };
}

/** Starts the production build (see startServer) on a fresh database, optionally seeded with the demo network. */
export async function startApp(options: { seedDemo: boolean }): Promise<RunningApp> {
  if (!existsSync(join(process.cwd(), ".next", "BUILD_ID"))) throw new Error("no production build: run `npx next build` before the end-to-end tests");
  const dir = mkdtempSync(join(tmpdir(), "phenopool-e2e-"));
  const databaseUrl = `file:${join(dir, "e2e.db")}`;
  const env: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: databaseUrl, NODE_ENV: "production" as const };
  const accountsFile = join(dir, "demo-accounts.json");
  // The demo's own accounts and truth files under data/ are left alone: this network is the test's.
  if (options.seedDemo) {
    await runToEnd(process.execPath, ["--import", "tsx", "seed/index.ts", "--accounts-file", accountsFile, "--truth", join(dir, "demo-truth.json")], env);
  }
  const server = await startServer({ databaseUrl });
  const accounts: DemoAccount[] = options.seedDemo ? (JSON.parse(readFileSync(accountsFile, "utf8")) as { accounts: DemoAccount[] }).accounts : [];
  return {
    baseUrl: server.baseUrl,
    databaseUrl,
    accounts,
    stop: async () => {
      await server.kill("SIGTERM");
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Playwright gives each launch a fresh, empty profile of its own. */
export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: [
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
}

/** Collects console errors and uncaught page errors, so a test can assert there were none. */
export function watchConsole(page: Page): string[] {
  const errors: string[] = [];
  page.on("console", (message) => {
    if (message.type() === "error") errors.push(message.text());
  });
  page.on("pageerror", (error) => errors.push(error.message));
  return errors;
}

export async function screenshot(page: Page, name: string): Promise<void> {
  mkdirSync(ARTIFACTS, { recursive: true });
  await page.screenshot({ path: join(ARTIFACTS, `${name}.png`), fullPage: true });
}

/** Signs `page` in through the sign-in page as the demo account of `role`; returns that account. */
export async function signInAs(page: Page, app: RunningApp, role: string): Promise<DemoAccount> {
  const account = app.accounts.find((a) => a.role === role);
  if (!account) throw new Error(`no demo ${role} account`);
  await signInWith(page, app, account);
  return account;
}

/** Signs `page` in through the sign-in page with `account`'s email and password. */
export async function signInWith(page: Page, app: RunningApp, account: Pick<DemoAccount, "email" | "password">): Promise<void> {
  await page.goto(`${app.baseUrl}/sign-in`);
  await page.getByLabel("Email").fill(account.email);
  await page.getByLabel("Password").fill(account.password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL(`${app.baseUrl}/`);
}

/** The app and the browser a test file drives, started before its tests and stopped after them. */
export interface AppSuite {
  app: RunningApp;
  browser: Browser;
}

/** Registers the hooks that start the app (with the demo network or empty) and Chromium for the file's tests. */
export function startAppForSuite(options: { seedDemo: boolean }): AppSuite {
  const suite = {} as AppSuite;
  beforeAll(async () => {
    suite.app = await startApp(options);
    suite.browser = await launchBrowser();
  });
  afterAll(async () => {
    await suite.browser?.close();
    await suite.app?.stop();
  });
  return suite;
}
