/**
 * Browser journey on a z-stack (issue 16): an OME z-stack (tests/fixtures/volumes: 22 × 18 px, 5 slices,
 * 0.1 µm per pixel, 0.35 µm between slices) with 3-D label cells and an outline over slices 2–4. The
 * workspace shows the XZ and YZ planes through the chosen point, painted and to scale (3.5 px per slice),
 * with the cells' outlines on them; typing a point fetches only its two sections; clicking a plane shows the
 * clicked slice; following the cursor moves the planes to the pixel under the pointer; the Pixel scatter and
 * live preview cover every slice (1,980 voxels) while the alignment composite stays a picture of the slice
 * shown. The screen passes axe
 * (serious and critical rules plus the structure rules, as tests/e2e/accessibility.test.ts).
 * Screenshot: test-results/ortho-views-01-stack.png.
 */
import fs from 'node:fs';
import { fileURLToPath } from 'node:url';
import { expect, it } from 'vitest';
import { serverAndBrowser, shot, signIn } from './harness.js';
import { scan } from './axe.js';

const e2e = serverAndBrowser();
const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));

it('shows the XZ and YZ planes of a stack with the cells on them, and the scatter over every slice', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  const api = (p: string) => `${e2e.srv.url}/api${p}`;
  const studies = (await (await page.request.get(api('/studies'))).json()) as { studies: { id: number; isDemo?: boolean }[] };
  const study = studies.studies.find((s) => s.isDemo) ?? studies.studies[0];
  const detail = (await (await page.request.get(api(`/studies/${study.id}`))).json()) as { conditions: { coverslips: { id: number }[] }[] };
  const coverslipId = detail.conditions[0].coverslips[0].id;
  const up = await page.request.post(api(`/coverslips/${coverslipId}/fields`), {
    multipart: { plan: JSON.stringify([{ name: 'Confocal stack', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]), files: { name: 'stack.ome.tif', mimeType: 'image/tiff', buffer: fs.readFileSync(dir + 'u16.xyzct.ome.tif') } },
  });
  const field = ((await up.json()) as { results: { field: { id: number; sizeZ: number } }[] }).results[0].field;
  expect(field.sizeZ).toBe(5);
  const labels = await page.request.post(api(`/fields/${field.id}/cells/import`), { multipart: { file: { name: 'labels3d.tif', mimeType: 'image/tiff', buffer: fs.readFileSync(dir + 'labels3d.tif') } } });
  expect(labels.status()).toBe(201);

  const sections: string[] = [];
  page.on('request', (r) => {
    const u = new URL(r.url());
    if (u.pathname === `/api/fields/${field.id}/pixels`) sections.push(u.search);
  });
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  const ortho = page.getByRole('region', { name: 'Orthogonal views' });
  await ortho.waitFor({ timeout: 20_000 });
  const xz = page.getByTestId('ortho-xz'), yz = page.getByTestId('ortho-yz');
  await xz.getByText('XZ plane through row y = 9').waitFor();
  await yz.getByText('YZ plane through column x = 11').waitFor();
  await ortho.getByText('Depth to scale: 0.35 µm between slices over 0.1 µm per pixel, so each slice is drawn 3.5 pixels tall.').waitFor();
  // the planes are painted (not black) and drawn at 3.5 pixel widths per slice
  await expect
    .poll(() => xz.locator('canvas').evaluate((c: HTMLCanvasElement) => {
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let lit = 0;
      for (let i = 0; i < d.length; i += 4) if (d[i] + d[i + 1] + d[i + 2] > 0) lit++;
      return `${c.width}×${c.height} ${lit > 0}`;
    }), { timeout: 20_000 })
    .toBe('22×5 true');
  const box = await xz.locator('canvas').boundingBox();
  expect(box!.height / box!.width).toBeCloseTo((5 * 3.5) / 22, 2);
  // the 3-D label cells on the planes
  await expect.poll(() => xz.locator('[data-outline]').count(), { timeout: 20_000 }).toBeGreaterThan(0);

  // a typed point: only its two sections are fetched
  sections.length = 0;
  await ortho.getByLabel('Point y').fill('4');
  await xz.getByText('XZ plane through row y = 4').waitFor();
  await expect.poll(() => sections.filter((s) => s.startsWith('?section=')).sort()).toEqual(['?section=xz&at=4']);
  // clicking the XZ plane on its fourth slice row shows slice 4 in the viewer
  await xz.locator('canvas').click({ position: { x: box!.width * 0.3, y: box!.height * (3.5 / 5) } });
  await expect.poll(() => page.getByLabel('Z slice').inputValue()).toBe('3');
  await expect.poll(() => ortho.getByLabel('Point x').inputValue()).toBe(String(Math.floor(0.3 * 22)));

  // following the cursor: the planes pass through the pixel under the pointer
  await ortho.getByLabel('Follow the cursor over the image').check();
  await page.getByTestId('field-viewer').scrollIntoViewIfNeeded();
  const viewer = await page.getByTestId('field-viewer').boundingBox();
  await page.mouse.move(viewer!.x + viewer!.width / 2, viewer!.y + viewer!.height / 2);
  await page.mouse.move(viewer!.x + viewer!.width / 2 + 1, viewer!.y + viewer!.height / 2 + 1);
  await expect.poll(() => ortho.getByLabel('Point y').inputValue(), { timeout: 10_000 }).not.toBe('4');
  const [fx, fy] = [await ortho.getByLabel('Point x').inputValue(), await ortho.getByLabel('Point y').inputValue()];
  // the middle of the fitted image is the middle of the 22 × 18 field
  expect([Math.abs(Number(fx) - 11) <= 1, Math.abs(Number(fy) - 9) <= 1]).toEqual([true, true]);
  await xz.getByText(`XZ plane through row y = ${fy}`).waitFor();
  await yz.getByText(`YZ plane through column x = ${fx}`).waitFor();
  await ortho.getByLabel('Follow the cursor over the image').uncheck();

  // the scatter and live preview over every slice: 22 × 18 × 5 voxels
  await expect.poll(() => page.getByRole('radio', { name: 'Every slice (3D)' }).isChecked()).toBe(true);
  await page.getByTestId('live-preview').getByText(/1,980 voxels/).waitFor({ timeout: 30_000 });
  // the alignment composite stays a picture of the slice shown (22 × 18), drawn anew for another slice, while
  // the scatter holds the whole volume
  const composite = page.getByTestId('alignment-composite');
  const drawn = () =>
    composite.locator('canvas').evaluate((c: HTMLCanvasElement) => {
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let sum = 0;
      for (let i = 0; i < d.length; i++) sum = (sum * 31 + d[i]) % 1_000_003;
      return { size: `${c.width}×${c.height}`, sum };
    });
  await expect.poll(async () => (await drawn()).size, { timeout: 20_000 }).toBe('22×18');
  const onSlice4 = (await drawn()).sum;
  await page.getByLabel('Z slice').selectOption('1');
  await expect.poll(async () => { const d = await drawn(); return d.size === '22×18' && d.sum !== onSlice4; }, { timeout: 20_000 }).toBe(true);
  expect(await composite.getByRole('alert').count()).toBe(0);
  await expect.poll(() => page.getByRole('radio', { name: 'Every slice (3D)' }).isChecked()).toBe(true);
  await page.getByRole('heading', { name: 'Orthogonal views' }).scrollIntoViewIfNeeded();
  await shot(page, 'ortho-views-01-stack');
  expect(await scan(page)).toEqual([]);
  expect(page.errors).toEqual([]);
});
