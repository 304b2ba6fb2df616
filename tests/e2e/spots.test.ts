/**
 * Browser journey through the Spots panel of the field workspace (headless Chromium, real server with the
 * seeded demo study): a run with the recipe's spots section on, its spots drawn over the image per channel
 * with pairs joined, the overlay toggled per channel, a cell's spot measures and nearest-distance histogram,
 * and live detection at the sliders' σ and k. Screenshots: test-results/spots-*.png.
 */
import { expect, it } from 'vitest';
import { apiSession, serverAndBrowser, shot, signIn } from './harness.js';

const e2e = serverAndBrowser();

it('shows a run’s spots per channel, toggles them, and previews detection live', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  const studies = (await mic('/studies')).body.studies as { id: number; isDemo?: boolean }[];
  const study = studies.find((s) => s.isDemo) ?? studies[0];
  const fields = (await mic(`/studies/${study.id}/fields`)).body.fields as { id: number }[];
  const field = fields[0];
  const cells = (await mic(`/fields/${field.id}/cells`)).body.cells as { id: number; name: string; role: string }[];
  const cell = cells.find((c) => c.role === 'cell')!;
  expect(cell).toBeTruthy();
  // a draft recipe with spots on, run (provisionally) on this one field
  const recipe = await mic('/recipes', { method: 'POST', body: JSON.stringify({ name: 'Spots journey', settings: { threshold: { method: 'none' }, coefficients: ['pearson'], objects: { enabled: true, k: 4, placements: 99 } } }) });
  expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
  const run = await mic('/runs', { method: 'POST', body: JSON.stringify({ recipeId: recipe.body.id, scope: { kind: 'field', id: field.id } }) });
  expect(run.status, JSON.stringify(run.body)).toBe(201);
  await expect.poll(async () => (await mic(`/runs/${run.body.id}`)).body.status, { timeout: 60_000, interval: 250 }).toBe('done');
  const stored = (await mic(`/runs/${run.body.id}/fields/${field.id}/spots`)).body as { spots: { channel: number }[] };
  const n1 = stored.spots.filter((s) => s.channel === 1).length;
  const n2 = stored.spots.filter((s) => s.channel === 2).length;
  expect(n1).toBeGreaterThan(0);
  expect(n2).toBeGreaterThan(0);

  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  await page.getByText('Loading image…').waitFor({ state: 'detached', timeout: 30_000 });
  const panel = page.getByTestId('spots-panel');
  await panel.getByText(`run #${run.body.id}`, { exact: false }).waitFor({ timeout: 20_000 });
  const layer = page.getByTestId('spot-layer');
  await expect.poll(async () => layer.locator('[data-spot="1"]').count(), { timeout: 20_000 }).toBe(n1);
  expect(await layer.locator('[data-spot="2"]').count()).toBe(n2);
  await shot(page, 'spots-01-run');

  // channel 1 off: its circles go, channel 2 stays; back on
  await panel.getByLabel(/spots$/).first().uncheck();
  await expect.poll(async () => layer.locator('[data-spot="1"]').count()).toBe(0);
  expect(await layer.locator('[data-spot="2"]').count()).toBe(n2);
  await shot(page, 'spots-02-channel-1-off');
  await panel.getByLabel(/spots$/).first().check();
  await expect.poll(async () => layer.locator('[data-spot="1"]').count()).toBe(n1);

  // a cell: its measures from the run and the nearest-distance histogram
  await page.getByTestId('cells-list').getByText(cell.name, { exact: true }).click();
  const cellSpots = page.getByTestId('cell-spots');
  await cellSpots.getByText(`Spots of ${cell.name}`).waitFor();
  await expect.poll(async () => cellSpots.locator('[data-measure="spotCount1"]').textContent(), { timeout: 20_000 }).toMatch(/^\d+$/);
  await shot(page, 'spots-03-cell');

  // live detection: a stricter k finds no more spots than a looser one
  await panel.getByLabel('Live detection while the sliders move').check();
  const status = panel.getByRole('status');
  await expect.poll(async () => status.textContent(), { timeout: 20_000 }).toMatch(/ms in the browser/);
  const count = async () => Number(/^(\d+)/.exec((await status.textContent()) ?? '')?.[1]);
  const loose = await count();
  await panel.getByLabel('k', { exact: true }).press('End');
  await expect.poll(async () => (await status.textContent())?.includes('ms in the browser') && (await count()) <= loose, { timeout: 20_000 }).toBe(true);
  await shot(page, 'spots-04-live');
  expect(page.errors).toEqual([]);
});
