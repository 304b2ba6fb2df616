/**
 * Browser journey through the pre-run check (headless Chromium, real server with the seeded demo study): a
 * recipe that subtracts a marked background region, a field of the study without one; Start run lists that
 * field with its problem and a link to its workspace, and "Start on N ready fields" starts a run of the
 * others only. Screenshot: test-results/run-check-01-blocked.png.
 */
import { expect, it } from 'vitest';
import { apiSession, serverAndBrowser, shot, signIn } from './harness.js';

const e2e = serverAndBrowser();

it('lists a blocked field with a link to fix it and starts on the ready fields', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  const studies = (await mic('/studies')).body.studies as { id: number; isDemo?: boolean }[];
  const study = studies.find((s) => s.isDemo) ?? studies[0];
  const fields = (await mic(`/studies/${study.id}/fields`)).body.fields as { id: number; name: string }[];
  expect(fields.length).toBeGreaterThan(1);
  // every field but the first gets a marked background region (and the first loses any it has), so the
  // recipe below measures all fields but the first
  const [blockedField, ...others] = fields;
  for (const f of fields) {
    const cells = (await mic(`/fields/${f.id}/cells`)).body.cells as { id: number; role: string }[];
    const marked = cells.some((c) => c.role === 'background');
    if (f === blockedField) for (const c of cells.filter((x) => x.role === 'background')) expect((await mic(`/cells/${c.id}`, { method: 'DELETE' })).status).toBe(200);
    else if (!marked) expect((await mic(`/fields/${f.id}/cells`, { method: 'POST', body: JSON.stringify({ role: 'background', geometry: { kind: 'rect', x: 0, y: 0, width: 8, height: 8 } }) })).status).toBe(201);
  }
  const name = 'Background from the marked region';
  const recipe = await mic('/recipes', { method: 'POST', body: JSON.stringify({ name, settings: { threshold: { method: 'none' }, coefficients: ['pearson'], background: { method: 'region' } } }) });
  expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
  const check = await mic('/runs/check', { method: 'POST', body: JSON.stringify({ recipeId: recipe.body.id, scope: { kind: 'study', id: study.id } }) });
  expect(check.status).toBe(200);
  const { ready, blocked } = check.body as { ready: number[]; blocked: { fieldId: number; problem: string; fixUrl: string }[] };
  expect(blocked.map((b) => b.fieldId)).toEqual([blockedField.id]);
  expect([...ready].sort((a, b) => a - b)).toEqual(others.map((f) => f.id).sort((a, b) => a - b));

  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/runs?studyId=${study.id}`);
  await page.getByLabel('Recipe').selectOption({ label: `${name} v1 (draft: provisional)` });
  await page.getByRole('button', { name: 'Start run' }).click();
  const dialog = page.getByRole('dialog');
  await dialog.getByRole('heading', { name: /cannot be measured with this recipe/ }).waitFor({ timeout: 20_000 });
  const item = dialog.getByRole('listitem').filter({ hasText: `field "${blockedField.name}" has none marked` });
  await expect.poll(() => item.count()).toBe(1);
  expect(await item.getByRole('link', { name: 'Fix the field' }).getAttribute('href')).toBe(`/studies/${study.id}/fields/${blockedField.id}`);
  await shot(page, 'run-check-01-blocked');

  await dialog.getByRole('button', { name: `Start on ${ready.length} ready field${ready.length === 1 ? '' : 's'}` }).click();
  await dialog.waitFor({ state: 'detached', timeout: 20_000 });
  await expect.poll(() => new URL(page.url()).searchParams.get('run'), { timeout: 20_000 }).toMatch(/^\d+$/);
  const runId = Number(new URL(page.url()).searchParams.get('run'));
  const run = (await mic(`/runs/${runId}`)).body as { fields: { fieldId: number }[] };
  expect(run.fields.map((f) => f.fieldId).sort((a, b) => a - b)).toEqual([...ready].sort((a, b) => a - b));
  expect(page.errors).toEqual([]);
});

it('sets a field’s pixel size from the workspace header, refusing a bad value with it quoted', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  const studies = (await mic('/studies')).body.studies as { id: number; isDemo?: boolean }[];
  const study = studies.find((s) => s.isDemo) ?? studies[0];
  const field = ((await mic(`/studies/${study.id}/fields`)).body.fields as { id: number }[])[1];
  expect((await mic(`/fields/${field.id}/pixel-size`, { method: 'PUT', body: JSON.stringify({ pixelSizeUm: null }) })).status).toBe(200);
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  const header = page.getByTestId('pixel-size');
  await header.getByText('no pixel size').waitFor({ timeout: 20_000 });
  await header.getByRole('button', { name: 'Set pixel size' }).click();
  const box = page.getByRole('group', { name: 'Pixel size' });
  await box.getByLabel('µm per pixel').fill('-3');
  await box.getByRole('button', { name: 'Save' }).click();
  await box.getByRole('alert').getByText('the pixel size must be above 0 µm per pixel, got -3').waitFor();
  await box.getByLabel('µm per pixel').fill('0.108');
  await box.getByLabel('µm per pixel').press('Enter');
  await page.getByTestId('pixel-size').getByText('0.108 µm/px').waitFor({ timeout: 20_000 });
  expect((await mic(`/fields/${field.id}`)).body.pixelSizeUm).toBe(0.108);
  expect(page.errors).toEqual([]);
});
