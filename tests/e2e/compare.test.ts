/**
 * Browser journey: the biologist measures the demo study (one run of the approved demo recipe),
 * opens Compare and sees the known demo effect in the expected direction — "treated" has a larger share of
 * puncta in both channels than "untreated" (server/db/seed), so the mean of coverslip means of Pearson's r
 * and of Manders' M1 is higher in "treated". Then the Cell table: exclude a cell with a reason, see it marked,
 * undo. Screenshots: test-results/compare-*.png.
 */
import { expect, it } from 'vitest';
import { serverAndBrowser, apiSession, shot, signIn } from './harness.js';

const e2e = serverAndBrowser();

const session = (email: string) => apiSession(e2e.srv, email);

it('shows the demo effect (treated > untreated) on the Compare page, and exclusions in the Cell table', async () => {
  const bio = await session('biologist@demo.test');
  const study = ((await bio('/studies')).body.studies as { id: number; isDemo: boolean }[]).find((s) => s.isDemo)!;
  expect(study).toBeTruthy();
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
  const means = async () => {
    const table = page.getByTestId('condition-table');
    await table.waitFor();
    const read = async (name: string) => Number(await table.locator(`tr[data-condition="${name}"] [data-testid="condition-mean"]`).innerText());
    return { untreated: await read('untreated'), treated: await read('treated') };
  };

  await page.goto(`${e2e.srv.url}/studies/${study.id}/compare?coefficient=pearson`);
  await page.getByTestId('superplot').waitFor();
  const r = await means();
  expect(r.treated).toBeGreaterThan(r.untreated);
  await expect.poll(() => page.getByTestId('compare-summary').innerText()).toMatch(/Treated is higher than untreated/);
  // every cell drawn, coverslip means as large markers (3 + 3 coverslips)
  expect(await page.locator('[data-testid="superplot"] [data-layer="coverslip-means"] path').count()).toBe(6);
  await shot(page, 'compare-01-pearson');

  await page.getByTestId('coefficient').selectOption('mandersM1');
  await page.waitForURL(/coefficient=mandersM1/);
  await expect.poll(async () => (await page.getByTestId('compare-summary').innerText()).includes("Manders' M1")).toBe(true);
  const m = await means();
  expect(m.treated).toBeGreaterThan(m.untreated);
  await shot(page, 'compare-02-manders');

  // the Cell table: exclude the first listed cell with a reason, see it marked, undo
  await page.goto(`${e2e.srv.url}/studies/${study.id}/cell-table`);
  const table = page.getByTestId('cell-table');
  await table.waitFor();
  const firstRow = table.locator('tbody tr').first();
  const cellId = await firstRow.getAttribute('data-cell-id');
  // the row opens the cell in the field workspace
  expect(await firstRow.getByRole('link').first().getAttribute('href')).toMatch(new RegExp(`^/studies/${study.id}/fields/\\d+\\?cell=${cellId}$`));
  expect(await firstRow.innerText()).toMatch(/untreated/); // condition column filled
  await firstRow.getByRole('button', { name: 'Exclude…' }).click();
  const dialog = page.getByRole('dialog');
  await dialog.getByRole('button', { name: 'Exclude cell' }).click();
  await expect.poll(() => dialog.getByText('give a reason of at least 3 characters').count()).toBe(1);
  await dialog.getByLabel('Reason').fill('two nuclei in one outline');
  await dialog.getByRole('button', { name: 'Exclude cell' }).click();
  await expect.poll(() => table.locator(`tr[data-cell-id="${cellId}"]`).innerText()).toContain('two nuclei in one outline');
  await shot(page, 'compare-03-cell-excluded');
  await page.getByRole('button', { name: 'Undo' }).click();
  await expect.poll(() => table.locator(`tr[data-cell-id="${cellId}"]`).innerText()).not.toContain('two nuclei');
  const audit = await bio(`/cells/${cellId}/exclusion-history`);
  expect(audit.body.events.map((e: { action: string }) => e.action)).toEqual(['cell.exclude', 'cell.restore']);
  expect(page.errors).toEqual([]);
});
