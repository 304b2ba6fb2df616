/**
 * Browser-test harness: the real server (server/index.ts, child process) on a random loopback port with a
 * fresh seeded DATA_DIR, and Debian's Chromium driven by playwright-core.
 *
 *   const e2e = serverAndBrowser();             // one server + one Chromium per file (beforeAll/afterAll)
 *   const srv = e2e.srv;                        // inside a test: { url, dataDir, stop() }
 *   const page = await e2e.page();              // page errors are collected: page.errors
 *   await signIn(page, srv, 'microscopist@demo.test');
 *   await shot(page, 'workspace-01-open');      // test-results/workspace-01-open.png
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, expect, inject } from 'vitest';
import { chromium, type Browser, type Page } from 'playwright-core';

export const DEMO_PASSWORD = 'syntopy-demo';
export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export interface RunningServer {
  url: string;
  port: number;
  dataDir: string;
  proc: ChildProcess;
  output: () => string;
  stop(signal?: NodeJS.Signals): Promise<void>;
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
    s.on('error', reject);
  });
}

/** Starts server/index.ts with tsx. `env` overrides (e.g. { SEED_DEMO: 'never' }); `dataDir` reuses a folder. */
export async function startServer(opts: { env?: Record<string, string>; dataDir?: string; timeoutMs?: number } = {}): Promise<RunningServer> {
  const port = await freePort();
  const dataDir = opts.dataDir ?? fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-e2e-data-'));
  let clientDir: string | undefined;
  try {
    clientDir = inject('clientDir');
  } catch {
    clientDir = undefined;
  }
  const proc = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], {
    cwd: path.resolve(import.meta.dirname, '../..'),
    env: {
      ...process.env,
      NODE_ENV: 'production',
      PORT: String(port),
      HOST: '127.0.0.1',
      DATA_DIR: dataDir,
      ...(clientDir ? { CLIENT_DIR: clientDir } : {}),
      ...opts.env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  proc.stdout!.on('data', (d) => (out += d));
  proc.stderr!.on('data', (d) => (out += d));
  const url = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + (opts.timeoutMs ?? 90_000);
  for (;;) {
    if (proc.exitCode !== null) throw new Error(`server exited (${proc.exitCode}):\n${out}`);
    try {
      const r = await fetch(`${url}/api/health`);
      if (r.ok) break;
    } catch {
      /* not up yet */
    }
    if (Date.now() > deadline) {
      proc.kill('SIGKILL');
      throw new Error(`server did not answer within ${opts.timeoutMs ?? 90_000} ms:\n${out}`);
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  return {
    url,
    port,
    dataDir,
    proc,
    output: () => out,
    async stop(signal: NodeJS.Signals = 'SIGTERM') {
      if (proc.exitCode !== null) return;
      const done = new Promise<void>((r) => proc.once('exit', () => r()));
      proc.kill(signal);
      const t = setTimeout(() => proc.kill('SIGKILL'), 5000);
      await done;
      clearTimeout(t);
    },
  };
}

export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({ executablePath: CHROMIUM, headless: true, args: CHROMIUM_ARGS });
}

/** The running server and browser of one test file, readable once its beforeAll has run. */
export interface E2E {
  readonly srv: RunningServer;
  readonly browser: Browser;
  /** `newPage(browser, srv)` */
  page(): Promise<TrackedPage>;
}

/**
 * Starts one server (startServer(opts)) and one Chromium in the file's beforeAll and stops both in its afterAll.
 * Call it at the top level of a test file.
 */
export function serverAndBrowser(opts: Parameters<typeof startServer>[0] = {}): E2E {
  let srv: RunningServer | undefined;
  let browser: Browser | undefined;
  beforeAll(async () => {
    srv = await startServer(opts);
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await srv?.stop();
  });
  const ready = () => {
    if (!srv || !browser) throw new Error('serverAndBrowser: the server and browser start in beforeAll; read them inside a test');
    return { srv, browser };
  };
  return {
    get srv() {
      return ready().srv;
    },
    get browser() {
      return ready().browser;
    },
    page: () => newPage(ready().browser, ready().srv),
  };
}

export type TrackedPage = Page & { errors: string[] };

/** A page whose uncaught errors and console errors are collected in `page.errors`. */
export async function newPage(browser: Browser, srv: RunningServer): Promise<TrackedPage> {
  const context = await browser.newContext({ baseURL: srv.url, viewport: { width: 1400, height: 900 } });
  const page = (await context.newPage()) as TrackedPage;
  page.errors = [];
  page.on('pageerror', (e) => page.errors.push(`pageerror: ${e.message}`));
  page.on('console', (m) => {
    // HTTP 4xx answers the app handles (e.g. 401 from /api/auth/me when signed out) are not page errors
    if (m.type() === 'error' && !m.text().startsWith('Failed to load resource')) page.errors.push(`console: ${m.text()}`);
  });
  return page;
}

export async function signIn(page: Page, srv: RunningServer, email: string, password = DEMO_PASSWORD) {
  await page.goto(`${srv.url}/signin`);
  await page.getByLabel(/e-?mail/i).fill(email);
  await page.getByLabel(/password/i).fill(password);
  await page.getByRole('button', { name: /sign in/i }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/signin'));
}

/**
 * On a calibration version's screen with its bead field chosen: presses "Measure shift", waits until the
 * measurement is stored and the value boxes follow it (the version is stored first, then the form), and returns
 * the boxes' dx, dy.
 */
export async function measureShiftOnScreen(page: Page): Promise<{ dx: number; dy: number }> {
  await page.getByRole('button', { name: 'Measure shift' }).click();
  await page.getByTestId('source-shift').waitFor({ timeout: 60_000 });
  const boxY = page.getByLabel('Channel shift, y (px)');
  await expect.poll(() => boxY.inputValue(), { timeout: 10_000 }).not.toBe('');
  return { dx: Number(await page.getByLabel('Channel shift, x (px)').inputValue()), dy: Number(await boxY.inputValue()) };
}

export async function shot(page: Page, name: string) {
  fs.mkdirSync('test-results', { recursive: true });
  await page.screenshot({ path: path.join('test-results', `${name}.png`), fullPage: true });
}

/** A signed-in fetch against the running server: `const bio = await apiSession(srv, 'biologist@demo.test'); await bio('/studies')`. */
export async function apiSession(srv: RunningServer, email: string, password = DEMO_PASSWORD) {
  const r = await fetch(`${srv.url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, password }) });
  if (r.status !== 200) throw new Error(`sign-in as ${email} failed: ${r.status}`);
  const cookie = (r.headers.get('set-cookie') ?? '').split(';')[0];
  return async (path: string, init: RequestInit = {}) => {
    const res = await fetch(`${srv.url}/api${path}`, { ...init, headers: { cookie, 'content-type': 'application/json', ...(init.headers ?? {}) } });
    const text = await res.text();
    return { status: res.status, body: text ? JSON.parse(text) : null };
  };
}

/**
 * Waits until the demo study has a finished run (the server measures it in the background after seeding), so a
 * report made next has numbers. `session` is an `apiSession` of a member of the study.
 */
export async function demoMeasured(session: Awaited<ReturnType<typeof apiSession>>, studyId: number, timeoutMs = 180_000) {
  const t0 = Date.now();
  for (;;) {
    const runs = (await session(`/runs?studyId=${studyId}`)).body.runs as { status: string }[];
    if (runs.some((r) => r.status === 'done' || r.status === 'partial') && !runs.some((r) => r.status === 'queued' || r.status === 'running')) return;
    if (Date.now() - t0 > timeoutMs) throw new Error(`the demo study's run did not finish within ${timeoutMs} ms: ${JSON.stringify(runs.map((r) => r.status))}`);
    await new Promise((r) => setTimeout(r, 300));
  }
}
