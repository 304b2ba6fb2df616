/**
 * Browser journey through the spot overlay of a z-stack (headless Chromium, real server): a two-channel stack
 * (48 × 48 px, 10 slices, 0.1 µm pixels, 0.2 µm between slices) with Gaussian spots planted in known slices
 * (channel 2: the same spots one pixel to the right), one cell over the whole field, a run with Spots on (found
 * in 3D). The workspace draws the spots whose z lies in the slice shown, pairs joined among them; choosing
 * another slice draws that slice's spots instead; the projection draws every spot. The expected counts come
 * from the run's stored spots (`GET /api/runs/:id/fields/:fieldId/spots`). Screenshots: test-results/spots-3d-*.png.
 */
import { expect, it } from 'vitest';
import { apiSession, serverAndBrowser, shot, signIn } from './harness.js';
import { writeTiffU16Described } from '../images/tiffwrite.js';
import { Xoshiro128 } from '../../shared/analysis/prng.js';

const e2e = serverAndBrowser();
const [W, H, Z, SIGMA, Z_SCALE] = [48, 48, 10, 1.5, 2];
/** planted centres [x, y, z] (z in slices, in the middle of the slice): two in slice 5, one in slice 8, one in slice 3 (1-based) */
const PLANTED = [
  [12.3, 12.6, 4.5],
  [34.2, 14.4, 4.5],
  [14.7, 34.1, 7.5],
  [33.6, 33.2, 2.5],
];

function stackTiff(): Buffer {
  const rng = new Xoshiro128(17);
  const sz = SIGMA / Z_SCALE;
  const pages: Uint16Array[] = [];
  for (let z = 0; z < Z; z++)
    for (const dx of [0, 1]) {
      const p = new Uint16Array(W * H);
      for (let y = 0; y < H; y++)
        for (let x = 0; x < W; x++) {
          let v = 100 + 20 * rng.nextFloat();
          for (const [cx, cy, cz] of PLANTED) v += 3000 * Math.exp(-((x + 0.5 - cx - dx) ** 2 + (y + 0.5 - cy) ** 2) / (2 * SIGMA * SIGMA) - (z + 0.5 - cz) ** 2 / (2 * sz * sz));
          p[y * W + x] = Math.round(v);
        }
      pages.push(p);
    }
  return writeTiffU16Described(pages, W, H, `channels=2\nslices=${Z}`);
}

it('draws the spots of the slice shown, and another slice’s spots when the slice changes', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  const api = (p: string) => `${e2e.srv.url}/api${p}`;
  const studies = (await mic('/studies')).body.studies as { id: number; isDemo?: boolean }[];
  const study = studies.find((s) => s.isDemo) ?? studies[0];
  const detail = (await mic(`/studies/${study.id}`)).body as { conditions: { coverslips: { id: number }[] }[] };
  const up = await page.request.post(api(`/coverslips/${detail.conditions[0].coverslips[0].id}/fields`), {
    multipart: {
      plan: JSON.stringify([{ name: 'Puncta stack', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, pixelSizeUm: 0.1, zStepUm: 0.1 * Z_SCALE }]),
      files: { name: 'puncta-stack.tif', mimeType: 'image/tiff', buffer: stackTiff() },
    },
  });
  const upBody = (await up.json()) as { results: { ok: boolean; error?: string; field: { id: number; sizeZ: number; zStepUm: number } }[] };
  expect(up.status(), JSON.stringify(upBody)).toBe(201);
  const field = upBody.results[0].field;
  expect(field).toMatchObject({ sizeZ: Z });
  const cell = await mic(`/fields/${field.id}/cells`, { method: 'POST', body: JSON.stringify({ name: 'Whole field', geometry: { kind: 'rect', x: 0, y: 0, width: W, height: H } }) });
  expect(cell.status, JSON.stringify(cell.body)).toBe(201);

  // a draft recipe with Spots on (every slice in 3D, the default), run provisionally on this field
  const recipe = await mic('/recipes', { method: 'POST', body: JSON.stringify({ name: 'Spots in 3D journey', settings: { threshold: { method: 'none' }, coefficients: ['pearson'], objects: { enabled: true, placements: 99 } } }) });
  expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
  const run = await mic('/runs', { method: 'POST', body: JSON.stringify({ recipeId: recipe.body.id, scope: { kind: 'field', id: field.id } }) });
  expect(run.status, JSON.stringify(run.body)).toBe(201);
  await expect.poll(async () => (await mic(`/runs/${run.body.id}`)).body.status, { timeout: 60_000, interval: 250 }).toBe('done');
  const stored = (await mic(`/runs/${run.body.id}/fields/${field.id}/spots`)).body as { spots: { channel: number; x: number; y: number; z?: number }[] };
  // every planted spot found in 3D in both channels, in its slice
  expect(stored.spots).toHaveLength(2 * PLANTED.length);
  for (const [cx, cy, cz] of PLANTED) for (const [ch, dx] of [[1, 0], [2, 1]]) expect(stored.spots.some((s) => s.channel === ch && Math.hypot(s.x - cx - dx, s.y - cy) < 0.5 && Math.floor(s.z!) === Math.floor(cz))).toBe(true);
  const onSlice = (z: number, ch: number) => stored.spots.filter((s) => s.channel === ch && Math.floor(s.z!) === z).length;

  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  await page.getByText('Loading image…').waitFor({ state: 'detached', timeout: 30_000 });
  const panel = page.getByTestId('spots-panel');
  await panel.getByText(`run #${run.body.id}`, { exact: false }).waitFor({ timeout: 20_000 });
  const layer = page.getByTestId('spot-layer');
  const drawn = async () => [await layer.locator('[data-spot="1"]').count(), await layer.locator('[data-spot="2"]').count(), await layer.locator('[data-pair]').count()];
  const zSelect = page.getByLabel('Z slice');
  // the middle slice is shown first: slice 5 of 10 (index 4), with two spots per channel, each pair joined
  await expect.poll(() => zSelect.inputValue(), { timeout: 20_000 }).toBe('4');
  await expect.poll(drawn, { timeout: 20_000 }).toEqual([onSlice(4, 1), onSlice(4, 2), 2]);
  expect(onSlice(4, 1)).toBe(2);
  const centres = async () => (await layer.locator('[data-spot="1"]').evaluateAll((els) => els.map((e) => Number(e.getAttribute('cx'))))).sort((a, b) => a - b);
  expect((await centres()).map(Math.round)).toEqual([12, 34]);
  await shot(page, 'spots-3d-01-slice-5');

  // slice 8: only the spot planted there
  await zSelect.selectOption('7');
  await expect.poll(drawn, { timeout: 20_000 }).toEqual([1, 1, 1]);
  expect((await centres()).map(Math.round)).toEqual([15]);
  await shot(page, 'spots-3d-02-slice-8');
  // a slice without spots draws none
  await zSelect.selectOption('0');
  await expect.poll(drawn, { timeout: 20_000 }).toEqual([0, 0, 0]);
  // the projection: every spot of the stack
  await zSelect.selectOption('mip');
  await expect.poll(drawn, { timeout: 20_000 }).toEqual([PLANTED.length, PLANTED.length, PLANTED.length]);
  await shot(page, 'spots-3d-03-projection');
  expect(page.errors).toEqual([]);
});
