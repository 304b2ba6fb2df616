/**
 * The whole job in a real browser: one journey per role on one server with the seeded demo study,
 * each step driven through the UI and photographed (test-results/journey-<role>-NN-<step>.png).
 *   microscopist  uploads a generated two-channel 16-bit TIFF, outlines a cell, proposes a recipe and starts a
 *                 (provisional) run with it;
 *   manager       approves that recipe in the Review queue;
 *   biologist     measures the study with the approved recipe, excludes a cell with a reason, compares the
 *                 conditions, freezes a report and shares it by e-mail with the collaborator;
 *   collaborator  opens the e-mailed link (read from the embedded SMTP sink through the Outbox) and reads it.
 * The describes run in order and hand state on (ids in `J`); a failing step fails the rest of its role only.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { serverAndBrowser, shot, signIn, type TrackedPage } from './harness.js';
import { tiffPages, twoChannels } from '../security/tiff.js';

const e2e = serverAndBrowser();
const J = {
  studyId: 0,
  coverslipId: 0,
  fieldId: 0,
  recipeId: 0,
  recipeName: `Journey recipe ${Date.now().toString(36)}`,
  reportTitle: 'Journey: treatment and co-localization',
  excludedCellId: 0,
};


/** fetch inside the page: same origin, the page's session cookie, the browser's own Origin header */
async function api<T = any>(page: TrackedPage, path: string, init: { method?: string; body?: unknown } = {}): Promise<{ status: number; body: T }> {
  return page.evaluate(
    async ({ path, init }) => {
      const r = await fetch(path, { method: init.method ?? 'GET', credentials: 'same-origin', headers: init.body ? { 'content-type': 'application/json' } : {}, body: init.body ? JSON.stringify(init.body) : undefined });
      const text = await r.text();
      let body: unknown = text;
      try {
        body = JSON.parse(text);
      } catch {
        /* not JSON */
      }
      return { status: r.status, body };
    },
    { path, init },
  ) as Promise<{ status: number; body: T }>;
}

async function waitForRun(page: TrackedPage, runId: number, timeoutMs = 180_000) {
  const t0 = Date.now();
  for (;;) {
    const r = await api<{ status: string; error: string | null }>(page, `/api/runs/${runId}`);
    if (!['queued', 'running'].includes(r.body.status)) return r.body;
    if (Date.now() - t0 > timeoutMs) throw new Error(`run ${runId} still ${r.body.status} after ${timeoutMs} ms`);
    await page.waitForTimeout(300);
  }
}

/** waits until no "Loading…" placeholder is left on the page */
async function settled(page: TrackedPage) {
  await expect.poll(async () => page.getByText(/^Loading/).count(), { timeout: 30_000 }).toBe(0);
}

describe('microscopist', () => {
  let page: TrackedPage;
  beforeAll(async () => {
    page = await e2e.page();
    await signIn(page, e2e.srv, 'microscopist@demo.test');
    const studies = await api<{ studies: { id: number; isDemo: boolean }[] }>(page, '/api/studies');
    J.studyId = studies.body.studies.find((s) => s.isDemo)!.id;
    const study = await api<{ conditions: { coverslips: { id: number }[] }[] }>(page, `/api/studies/${J.studyId}`);
    J.coverslipId = study.body.conditions[0].coverslips[0].id;
  });
  afterAll(() => page?.context().close());

  it('uploads a two-channel 16-bit TIFF to a coverslip', async () => {
    await page.goto(`${e2e.srv.url}/studies/${J.studyId}`);
    await page.getByRole('button', { name: 'Add fields…' }).first().waitFor();
    await shot(page, 'journey-microscopist-01-study');
    await page.getByRole('button', { name: 'Add fields…' }).first().click();
    const dialog = page.getByRole('dialog');
    const [a, b] = twoChannels(160, 120);
    await dialog.locator('input[type=file]').first().setInputFiles({ name: 'journey-two-channel.tif', mimeType: 'image/tiff', buffer: tiffPages(160, 120, [a, b]) });
    await dialog.getByRole('button', { name: /^Upload/ }).click();
    await dialog.getByText('1 of 1 field added.').waitFor({ timeout: 60_000 });
    expect(await dialog.getByLabel('Upload results').innerText()).toMatch(/160×120, 16-bit integer/);
    await shot(page, 'journey-microscopist-02-uploaded');
    await dialog.getByRole('button', { name: 'Done' }).click();
    const fields = await api<{ fields: { id: number; name: string; coverslipId: number }[] }>(page, `/api/studies/${J.studyId}/fields`);
    const f = fields.body.fields.find((x) => x.name === 'journey-two-channel')!;
    expect(f).toBeTruthy();
    J.fieldId = f.id;
    J.coverslipId = f.coverslipId;
  });

  it('outlines a cell on the new field', async () => {
    await page.goto(`${e2e.srv.url}/studies/${J.studyId}/fields/${J.fieldId}`);
    const viewer = page.getByTestId('field-viewer');
    await viewer.waitFor();
    await page.getByText('Loading image…').waitFor({ state: 'detached', timeout: 30_000 });
    await page.keyboard.press('b'); // box tool
    const vb = (await viewer.boundingBox())!;
    const x0 = vb.x + vb.width / 2 - 40, y0 = vb.y + vb.height / 2 - 30;
    await page.mouse.move(x0, y0);
    await page.mouse.down();
    await page.mouse.move(x0 + 80, y0 + 60, { steps: 6 });
    await page.mouse.up();
    await page.getByTestId('cells-list').getByText('Cell 1', { exact: true }).waitFor();
    await page.getByText('All changes saved').waitFor({ timeout: 15_000 });
    const cells = await api<{ cells: { name: string; pixelCount: number }[] }>(page, `/api/fields/${J.fieldId}/cells`);
    expect(cells.body.cells.find((c) => c.name === 'Cell 1')!.pixelCount).toBeGreaterThan(50);
    await shot(page, 'journey-microscopist-03-outlined');
  });

  it('proposes a recipe and submits it for review', async () => {
    await page.goto(`${e2e.srv.url}/recipes/new`);
    await page.getByLabel('Name').fill(J.recipeName);
    await page.getByLabel('What it is for').fill('Costes thresholds, every coefficient; proposed in the browser journey.');
    await page.getByRole('button', { name: 'Save draft' }).click();
    await page.waitForURL(/\/recipes\/\d+$/);
    J.recipeId = Number(/\/recipes\/(\d+)$/.exec(page.url())![1]);
    await page.getByRole('button', { name: 'Submit for review' }).click();
    await expect.poll(async () => (await api<{ status: string }>(page, `/api/recipes/${J.recipeId}`)).body.status, { timeout: 15_000 }).toBe('submitted');
    await shot(page, 'journey-microscopist-04-recipe-submitted');
  });

  it('starts a run of the new recipe on the coverslip (provisional until approved)', async () => {
    await page.goto(`${e2e.srv.url}/runs?studyId=${J.studyId}`);
    await page.getByLabel('Recipe').selectOption({ label: `${J.recipeName} v1 (submitted: provisional)` });
    await page.getByLabel('Measure').selectOption(`coverslip:${J.coverslipId}`);
    await shot(page, 'journey-microscopist-05-start-run');
    const created = page.waitForResponse((r) => r.url().endsWith('/api/runs') && r.request().method() === 'POST');
    await page.getByRole('button', { name: 'Start run' }).click();
    const res = await created;
    expect(res.status()).toBe(201);
    const runId = (await res.json()).id as number;
    const done = await waitForRun(page, runId);
    expect(done.status, String(done.error)).toBe('done');
    const detail = await api<{ provisional: boolean; measurements: number }>(page, `/api/runs/${runId}`);
    expect(detail.body.provisional).toBe(true);
    expect(detail.body.measurements).toBeGreaterThan(0);
    await page.goto(`${e2e.srv.url}/runs?studyId=${J.studyId}&run=${runId}`);
    await settled(page);
    await shot(page, 'journey-microscopist-06-run-done');
    expect(page.errors).toEqual([]);
  });
});

describe('facility manager', () => {
  let page: TrackedPage;
  beforeAll(async () => {
    page = await e2e.page();
    await signIn(page, e2e.srv, 'manager@demo.test');
  });
  afterAll(() => page?.context().close());

  it('approves the submitted recipe from the Review queue', async () => {
    expect(J.recipeId).toBeGreaterThan(0);
    await page.goto(`${e2e.srv.url}/review`);
    await page.getByRole('link', { name: J.recipeName }).first().waitFor();
    await shot(page, 'journey-manager-01-review-queue');
    await page.getByRole('link', { name: J.recipeName }).first().click();
    await page.waitForURL(new RegExp(`/recipes/${J.recipeId}$`));
    await page.getByLabel('Note to the proposer').fill('Settings match the facility standard.');
    await page.getByRole('button', { name: 'Approve v1' }).click();
    await expect.poll(async () => (await api<{ status: string }>(page, `/api/recipes/${J.recipeId}`)).body.status, { timeout: 15_000 }).toBe('approved');
    await page.reload();
    await page.getByText(/approved/i).first().waitFor();
    await shot(page, 'journey-manager-02-approved');
    expect(page.errors).toEqual([]);
  });
});

describe('biologist', () => {
  let page: TrackedPage;
  beforeAll(async () => {
    page = await e2e.page();
    await signIn(page, e2e.srv, 'biologist@demo.test');
  });
  afterAll(() => page?.context().close());

  it('measures the whole study with the approved recipe', async () => {
    await page.goto(`${e2e.srv.url}/runs?studyId=${J.studyId}`);
    await page.getByLabel('Recipe').selectOption({ label: `${J.recipeName} v1` });
    await page.getByLabel('Measure').selectOption(`study:${J.studyId}`);
    const created = page.waitForResponse((r) => r.url().endsWith('/api/runs') && r.request().method() === 'POST');
    await page.getByRole('button', { name: 'Start run' }).click();
    const runId = (await (await created).json()).id as number;
    const done = await waitForRun(page, runId);
    expect(done.status, String(done.error)).toBe('done');
    await page.goto(`${e2e.srv.url}/runs?studyId=${J.studyId}&run=${runId}`);
    await settled(page);
    await shot(page, 'journey-biologist-01-study-measured');
  });

  it('excludes a cell with a reason in the Cell table', async () => {
    await page.goto(`${e2e.srv.url}/studies/${J.studyId}/cell-table?recipeId=${J.recipeId}`);
    const table = page.getByTestId('cell-table');
    await table.waitFor();
    const row = table.locator('tbody tr').filter({ has: page.getByRole('button', { name: 'Exclude…' }) }).first();
    J.excludedCellId = Number(await row.getAttribute('data-cell-id'));
    await row.getByRole('button', { name: 'Exclude…' }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByLabel('Reason').fill('two nuclei in one outline');
    await shot(page, 'journey-biologist-02-exclude-dialog');
    await dialog.getByRole('button', { name: 'Exclude cell' }).click();
    await table.locator(`tr[data-cell-id="${J.excludedCellId}"]`).getByRole('button', { name: 'Restore' }).waitFor();
    const hist = await api<{ events: { action: string; reason: string | null }[] }>(page, `/api/cells/${J.excludedCellId}/exclusion-history`);
    expect(hist.body.events.at(-1)).toMatchObject({ action: 'cell.exclude', reason: 'two nuclei in one outline' });
    await shot(page, 'journey-biologist-03-excluded');
  });

  it('compares the conditions', async () => {
    await page.goto(`${e2e.srv.url}/studies/${J.studyId}/compare?recipeId=${J.recipeId}`);
    await page.getByTestId('compare-summary').waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('compare-summary').innerText()).toMatch(/untreated|treated/);
    await shot(page, 'journey-biologist-04-compare');
  });

  it('freezes a report and shares it with the collaborator by e-mail', async () => {
    await page.goto(`${e2e.srv.url}/studies/${J.studyId}/reports`);
    await page.getByRole('button', { name: /new report|make the first report/i }).first().click();
    await page.getByLabel('Title').fill(J.reportTitle);
    await page.getByLabel('Notes').fill('Made in the browser journey test.');
    await page.getByRole('button', { name: 'Freeze report' }).click();
    await page.waitForURL(/\/reports\/\d+$/);
    await page.getByRole('heading', { name: J.reportTitle }).waitFor();
    await page.getByTestId('methods').waitFor();
    await shot(page, 'journey-biologist-05-report');
    await page.getByRole('button', { name: 'Share by e-mail' }).click();
    await page.getByLabel('E-mail addresses').fill('collaborator@demo.test');
    await page.getByLabel('Message').fill('The frozen comparison, as promised.');
    await page.getByRole('button', { name: 'Send links' }).click();
    await page.getByRole('cell', { name: 'collaborator@demo.test' }).waitFor();
    await shot(page, 'journey-biologist-06-shared');
    expect(page.errors).toEqual([]);
  });
});

describe('collaborator', () => {
  it('opens the e-mailed link from the SMTP sink and reads the report', async () => {
    // the message as the embedded SMTP sink received it, read through the Outbox (a facility manager's view)
    const mgr = await e2e.page();
    await signIn(mgr, e2e.srv, 'manager@demo.test');
    const list = await api<{ messages: { id: number; to: string; via: string; subject: string }[] }>(mgr, '/api/outbox');
    const msg = list.body.messages.find((m) => m.to.includes('collaborator@demo.test') && m.subject.includes(J.reportTitle))!;
    expect(msg).toBeTruthy();
    expect(msg.via).toBe('sink');
    await mgr.goto(`${e2e.srv.url}/outbox`);
    await mgr.getByText(msg.subject).first().waitFor();
    await shot(mgr, 'journey-collaborator-01-outbox');
    const full = await api<{ text: string }>(mgr, `/api/outbox/${msg.id}`);
    await mgr.context().close();
    const link = /(https?:\/\/\S+\/shared\/[A-Za-z0-9_.-]+)/.exec(full.body.text)![1];
    expect(full.body.text).toContain('The frozen comparison, as promised.');

    const page = await e2e.page();
    await signIn(page, e2e.srv, 'collaborator@demo.test');
    await shot(page, 'journey-collaborator-02-home');
    await page.goto(link);
    await page.getByRole('heading', { name: J.reportTitle }).waitFor({ timeout: 30_000 });
    expect(await page.getByTestId('methods').innerText()).toMatch(/References/);
    expect(await page.getByRole('button', { name: 'Share by e-mail' }).count()).toBe(0);
    await shot(page, 'journey-collaborator-03-report');
    // read-only: the collaborator cannot change the study even with the API
    const write = await api(page, `/api/cells/${J.excludedCellId}/exclusion`, { method: 'DELETE', body: {} });
    expect([403, 404]).toContain(write.status);
    expect(page.errors).toEqual([]);
    await page.context().close();
  });
});
