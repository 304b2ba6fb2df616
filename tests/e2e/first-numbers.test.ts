/**
 * Browser checks of issue 19 items 1, 3, 4 and 5 on the seeded demo (real server, headless Chromium):
 * - the whole-field Pixel scatter's default thresholds describe the outlined cells, the basis is stated and
 *   saturated pixels are shown;
 * - a microscopist of the demo lab adds a coverslip from the study page;
 * - Compare shows the median beside the Fisher-z mean and keeps the r axis within [−1, 1];
 * - the report's methods paragraph says how the outlines were made, the pixel size and no internal keys.
 * Screenshots: test-results/first-numbers-*.png.
 */
import { expect, it } from 'vitest';
import { apiSession, serverAndBrowser, shot, signIn } from './harness.js';

const e2e = serverAndBrowser();
const session = (email: string) => apiSession(e2e.srv, email);

async function demoStudy() {
  const mic = await session('microscopist@demo.test');
  const study = ((await mic('/studies')).body.studies as { id: number; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const fields = (await mic(`/studies/${study.id}/fields`)).body.fields as { id: number }[];
  return { study, fields };
}

it('the whole-field scatter: thresholds over the outlined cells, the basis stated, saturated pixels shown', async () => {
  const { study, fields } = await demoStudy();
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${fields[0].id}`);
  await page.getByTestId('pixel-scatter').waitFor({ timeout: 60_000 });
  const basis = page.getByTestId('threshold-basis');
  await expect.poll(() => basis.innerText(), { timeout: 30_000 }).toMatch(/^Thresholds by Otsu \(1979\) over the pixels of the \d+ outlined cells; (no saturated pixels to leave out|[\d,]+ saturated pixels? left out)\.$/);
  // the demo field holds saturated debris: the scatter marks it and counts it per channel
  await expect.poll(() => page.getByTestId('scatter-saturated').innerText()).toMatch(/saturated pixels? \(only .* both [\d,]+\) drawn in red/);
  // with thresholds from the cells, some pixels are above both (the issue saw 100 % "neither")
  const both = await page.locator('dt:text-is("Both above") + dd').innerText();
  expect(both).not.toMatch(/^0 /);
  await shot(page, 'first-numbers-01-scatter');
});

it('a microscopist of the lab adds a coverslip', async () => {
  const { study } = await demoStudy();
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}`);
  const add = page.getByRole('button', { name: 'Add coverslip' }).first();
  await add.waitFor();
  await add.click();
  const dialog = page.getByRole('dialog');
  await dialog.getByLabel('Name').fill('Imaged this morning');
  await dialog.getByRole('button', { name: 'Add coverslip' }).click();
  await page.getByText('Imaged this morning', { exact: true }).waitFor();
  expect(await page.getByRole('button', { name: /^Delete coverslip/ }).count()).toBe(0);
  await shot(page, 'first-numbers-02-coverslip');
});

it('Compare shows medians beside the means; the report states how outlines were made', async () => {
  const bio = await session('biologist@demo.test');
  const { study } = await demoStudy();
  const recipeId = (await bio('/recipes?status=approved')).body.recipes[0].id as number;
  const run = await bio('/runs', { method: 'POST', body: JSON.stringify({ recipeId, scope: { kind: 'study', id: study.id } }) });
  expect([200, 201]).toContain(run.status);
  const runId = run.body.id ?? run.body.run?.id;
  let status = 'queued';
  for (let i = 0; i < 1200 && ['queued', 'running'].includes(status); i++) {
    status = (await bio(`/runs/${runId}`)).body.status;
    if (['queued', 'running'].includes(status)) await new Promise((res) => setTimeout(res, 250));
  }
  expect(status).toBe('done');

  const page = await e2e.page();
  await signIn(page, e2e.srv, 'biologist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}/compare?coefficient=pearson`);
  await page.getByTestId('superplot').waitFor({ timeout: 60_000 });
  const medians = page.locator('[data-testid="condition-median"]');
  await expect.poll(() => medians.count()).toBeGreaterThan(1);
  for (const m of await medians.allInnerTexts()) expect(Number(m)).toBeGreaterThan(-1);
  const ticks = (await page.locator('[data-testid="superplot"] text[text-anchor="end"]').evaluateAll((els) => els.map((e) => e.textContent ?? ''))).map((x) => Number(x.replace('−', '-')));
  expect(ticks.length).toBeGreaterThan(2);
  for (const v of ticks) expect(Math.abs(v)).toBeLessThanOrEqual(1);
  await shot(page, 'first-numbers-03-compare');

  const made = await bio(`/studies/${study.id}/reports`, { method: 'POST', body: JSON.stringify({ title: 'Methods as written', coefficients: ['pearson', 'mandersM1'] }) });
  expect(made.status).toBe(201);
  await page.goto(`${e2e.srv.url}/reports/${made.body.id ?? made.body.report?.id}`);
  const methods = page.getByTestId('methods');
  await methods.waitFor({ timeout: 60_000 });
  const text = await methods.innerText();
  expect(text).toMatch(/Outlines: .*came with the invented demo data/);
  expect(text).toMatch(/pixel size|Pixel size/);
  expect(text).not.toMatch(/z handling|slice 0|\b[a-z]+\.[a-z][A-Za-z]* = |excluded before analysis/);
  await shot(page, 'first-numbers-04-methods');
});
