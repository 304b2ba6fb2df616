/**
 * Browser journey through the field workspace (headless Chromium via playwright-core, real server with the
 * seeded demo study): sign in as the demo microscopist, open a demo field, draw a polygon with the mouse,
 * see it in the Cells list and saved (a reload keeps it), see its live coefficients (marked preview), drag a
 * vertex and undo it. Screenshots: test-results/workspace-*.png.
 */
import { expect, it } from 'vitest';
import { serverAndBrowser, shot, signIn, type TrackedPage } from './harness.js';
import { writeTiff } from '../workspace/helpers.js';

const e2e = serverAndBrowser();

async function apiGet<T>(page: TrackedPage, path: string): Promise<T> {
  return page.evaluate(async (p) => {
    const r = await fetch(p, { credentials: 'same-origin' });
    if (!r.ok) throw new Error(`${p}: ${r.status}`);
    return r.json();
  }, path);
}

it('draws a polygon, keeps it after a reload and shows its live coefficients', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  // a demo field of the demo study
  const studies = await apiGet<{ studies: { id: number; isDemo?: boolean; name: string }[] }>(page, '/api/studies');
  const study = studies.studies.find((s) => s.isDemo) ?? studies.studies[0];
  expect(study).toBeTruthy();
  const fields = await apiGet<{ fields: { id: number; name: string; width: number; height: number }[] }>(page, `/api/studies/${study.id}/fields`);
  expect(fields.fields.length).toBeGreaterThan(0);
  const field = fields.fields[0];
  const before = await apiGet<{ cells: { id: number; name: string }[] }>(page, `/api/fields/${field.id}/cells`);

  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  const viewer = page.getByTestId('field-viewer');
  await viewer.waitFor();
  await page.getByText('Loading image…').waitFor({ state: 'detached', timeout: 30_000 });
  await page.getByTestId('pixel-scatter').waitFor({ timeout: 30_000 });
  await shot(page, 'workspace-01-open');

  // polygon tool (P), four clicks inside the image, then click the first point to close
  await page.keyboard.press('p');
  const box = (await viewer.boundingBox())!;
  const cx = box.x + box.width / 2, cy = box.y + box.height / 2;
  const pts: [number, number][] = [[cx - 60, cy - 50], [cx + 50, cy - 60], [cx + 70, cy + 40], [cx - 40, cy + 60]];
  for (const [x, y] of pts) await page.mouse.click(x, y);
  await page.mouse.click(pts[0][0], pts[0][1]);
  const name = `Cell ${before.cells.filter((c) => /^Cell /.test(c.name)).length + 1}`;
  const list = page.getByTestId('cells-list');
  await list.getByText(name, { exact: true }).waitFor();
  await page.getByText('All changes saved').waitFor({ timeout: 15_000 });
  await shot(page, 'workspace-02-drawn');

  const after = await apiGet<{ cells: { id: number; name: string; pixelCount: number; geometry: { kind: string } }[] }>(page, `/api/fields/${field.id}/cells`);
  const made = after.cells.find((c) => c.name === name)!;
  expect(made).toBeTruthy();
  expect(made.geometry.kind).toBe('polygon');
  expect(made.pixelCount).toBeGreaterThan(20);

  // live coefficients of the selected (new) cell, marked preview
  const preview = page.getByTestId('live-preview');
  await preview.getByText('preview').waitFor();
  await expect.poll(async () => preview.locator('[data-coef="pearson"]').textContent(), { timeout: 20_000 }).toMatch(/^-?\d\.\d{3}$/);
  await expect.poll(async () => preview.textContent(), { timeout: 20_000 }).toContain(`${made.pixelCount.toLocaleString('en-US')} pixels`);
  await shot(page, 'workspace-03-live');

  // reload keeps it
  await page.reload();
  await page.getByTestId('cells-list').getByText(name, { exact: true }).waitFor();
  // select it from the list; the scatter follows the selection
  await page.getByTestId('cells-list').getByText(name, { exact: true }).click();
  await page.getByTestId('pixel-scatter').waitFor();
  await expect.poll(async () => page.getByTestId('live-preview').locator('[data-coef="pearson"]').textContent(), { timeout: 20_000 }).toMatch(/^-?\d\.\d{3}$/);
  await page.getByText(/Shown intensities and the view change the picture only/).waitFor();
  await page.getByText(/not that the molecules interact/).waitFor();
  await shot(page, 'workspace-04-reloaded');

  // select tool, drag a vertex: saved with a new pixel count; undo restores the old one
  await page.keyboard.press('v');
  await page.mouse.move(pts[2][0], pts[2][1]);
  await page.mouse.down();
  await page.mouse.move(pts[2][0] + 40, pts[2][1] + 30, { steps: 6 });
  await page.mouse.up();
  await expect
    .poll(async () => (await apiGet<{ cells: { id: number; pixelCount: number }[] }>(page, `/api/fields/${field.id}/cells`)).cells.find((c) => c.id === made.id)?.pixelCount, { timeout: 15_000 })
    .toBeGreaterThan(made.pixelCount);
  await page.keyboard.press('Control+z');
  await expect
    .poll(async () => (await apiGet<{ cells: { id: number; pixelCount: number }[] }>(page, `/api/fields/${field.id}/cells`)).cells.find((c) => c.id === made.id)?.pixelCount, { timeout: 15_000 })
    .toBe(made.pixelCount);
  await shot(page, 'workspace-05-undo');
  expect(page.errors).toEqual([]);
});

it('finds cells automatically, marks a background box, links result rows to cells, deletes and undoes by keyboard', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  const studies = await apiGet<{ studies: { id: number; isDemo?: boolean }[] }>(page, '/api/studies');
  const study = studies.studies.find((s) => s.isDemo) ?? studies.studies[0];
  const fields = await apiGet<{ fields: { id: number }[] }>(page, `/api/studies/${study.id}/fields`);
  const field = fields.fields[1] ?? fields.fields[0];
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  await page.getByTestId('pixel-scatter').waitFor({ timeout: 30_000 });

  // automatic outlines
  await page.getByRole('button', { name: 'Find cells…' }).click();
  const dialog = page.getByRole('dialog');
  // a preview first: nothing is stored until the outlines are kept
  await dialog.getByRole('button', { name: 'Preview', exact: true }).click();
  await dialog.getByText(/Nothing is stored until you keep them/).waitFor({ timeout: 30_000 });
  expect(await dialog.getByTestId('find-cells-preview-image').locator('polygon').count()).toBeGreaterThan(3);
  await shot(page, 'workspace-06a-find-cells-preview');
  await dialog.getByRole('button', { name: /^Keep \d+ outlines$/ }).click();
  await page.getByText(/cells? found and kept \(level/).waitFor({ timeout: 30_000 });
  const list = page.getByTestId('cells-list');
  await list.getByText('Auto 1', { exact: true }).waitFor();
  // the Cells list says how each cell was made
  expect(await list.getByText(/found automatically/).count()).toBeGreaterThan(3);
  const auto = (await apiGet<{ cells: { name: string; source: string }[] }>(page, `/api/fields/${field.id}/cells`)).cells.filter((c) => c.source === 'automatic');
  expect(auto.length).toBeGreaterThan(3);
  await shot(page, 'workspace-06-auto');

  // a background box (M toggles background mode, B the box tool)
  await page.keyboard.press('m');
  await page.keyboard.press('b');
  const viewer = page.getByTestId('field-viewer');
  const vb = (await viewer.boundingBox())!;
  const x0 = vb.x + vb.width / 2 - 20, y0 = vb.y + 30;
  await page.mouse.move(x0, y0);
  await page.mouse.down();
  await page.mouse.move(x0 + 40, y0 + 25, { steps: 5 });
  await page.mouse.up();
  await list.getByText('Background 1', { exact: true }).waitFor();
  await page.getByText('All changes saved').waitFor({ timeout: 15_000 });
  const bg = (await apiGet<{ cells: { name: string; role: string }[] }>(page, `/api/fields/${field.id}/cells`)).cells.find((c) => c.name === 'Background 1');
  expect(bg?.role).toBe('background');

  // a results row selects its cell in the list and the scatter follows
  await page.keyboard.press('v');
  const row = page.getByTestId('results-table').locator('tbody tr').first();
  const rowName = (await row.locator('td').first().textContent())!;
  await row.click();
  await expect.poll(async () => list.getByRole('button', { name: new RegExp(`^${rowName}\\b`) }).getAttribute('aria-pressed')).toBe('true');
  await expect.poll(async () => page.locator('section[aria-label="Pixel scatter"]').textContent()).toContain(rowName);
  await shot(page, 'workspace-07-row-selected');

  // Delete removes the selected outline; Ctrl+Z brings it back (saved again as a new cell)
  await viewer.focus();
  await page.keyboard.press('Delete');
  await list.getByText(rowName, { exact: true }).waitFor({ state: 'detached' });
  await page.getByText('All changes saved').waitFor({ timeout: 15_000 });
  expect((await apiGet<{ cells: { name: string }[] }>(page, `/api/fields/${field.id}/cells`)).cells.some((c) => c.name === rowName)).toBe(false);
  await page.keyboard.press('Control+z');
  await list.getByText(rowName, { exact: true }).waitFor();
  await expect.poll(async () => (await apiGet<{ cells: { name: string }[] }>(page, `/api/fields/${field.id}/cells`)).cells.some((c) => c.name === rowName), { timeout: 15_000 }).toBe(true);
  await shot(page, 'workspace-08-undo-delete');
  expect(page.errors).toEqual([]);
});

it('measures the pixel scatter of a 1024 × 1024 field in the browser (whole field, then a threshold drag)', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  const studies = await apiGet<{ studies: { id: number; isDemo?: boolean }[] }>(page, '/api/studies');
  const study = studies.studies.find((s) => s.isDemo) ?? studies.studies[0];
  const detail = await apiGet<{ conditions: { coverslips: { id: number }[] }[] }>(page, `/api/studies/${study.id}`);
  const coverslipId = detail.conditions[0].coverslips[0].id;
  // a synthetic 1024² two-channel 16-bit field: correlated noise (seeded LCG; common practice)
  const W = 1024, N = W * W;
  const ch1 = new Uint16Array(N), ch2 = new Uint16Array(N);
  let s = 7;
  const rnd = () => ((s = (s * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff);
  for (let i = 0; i < N; i++) {
    const a = rnd() * 3000;
    ch1[i] = a + rnd() * 500;
    ch2[i] = a * 0.7 + rnd() * 800;
  }
  const up = await page.request.post(`${e2e.srv.url}/api/coverslips/${coverslipId}/fields`, {
    multipart: { files: { name: 'big-1024.tif', mimeType: 'image/tiff', buffer: writeTiff([ch1, ch2], W, W, 16) } },
  });
  expect(up.status()).toBeLessThan(300);
  const body = (await up.json()) as { results: { ok: boolean; field?: { id: number } }[] };
  const fieldId = body.results[0].field!.id;
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${fieldId}`);
  const scatterEl = page.getByTestId('pixel-scatter');
  await scatterEl.waitFor({ timeout: 60_000 });
  const section = page.locator('section[aria-label="Pixel scatter"]');
  await section.getByText('1,048,576 pixels').waitFor({ timeout: 60_000 });
  const msOf = async () => Number(((await section.locator('[title^="time for the last update"]').textContent()) ?? '').replace(/[^0-9.]/g, ''));
  const whole = await msOf();
  // drag the T1 line across: each move is one worker update (quadrant counts only)
  const b = (await scatterEl.boundingBox())!;
  const before = await section.textContent();
  await page.mouse.move(b.x + b.width * 0.5, b.y + b.height * 0.5);
  await page.mouse.down();
  await page.mouse.move(b.x + b.width * 0.3, b.y + b.height * 0.6, { steps: 8 });
  await page.mouse.up();
  await expect.poll(async () => section.textContent(), { timeout: 20_000 }).not.toBe(before);
  const drag = await msOf();
  console.log(`[workspace] 1024² pixel scatter in Chromium: whole field ${whole} ms, threshold drag update ${drag} ms`);
  await shot(page, 'workspace-09-1024');
  expect(whole).toBeLessThan(3000);
  expect(drag).toBeLessThan(500);
  expect(page.errors).toEqual([]);
});
