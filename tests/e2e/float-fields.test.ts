/**
 * Browser journey: float32 fields in the field workspace (headless Chromium, real server, demo study). As the
 * demo microscopist, upload a float32 field as a pair of single-channel files and one as a 2-page file, give
 * each a cell, open it, and see the Pixel scatter and the live coefficients as numbers (Pearson's r equal to
 * the value computed here from the same pixels). A pixel message that does not follow the format shows an
 * error instead of "Computing…". Screenshots: test-results/float-*.png.
 */
import { expect, it } from 'vitest';
import { serverAndBrowser, shot, signIn, type TrackedPage } from './harness.js';
import { writeTiff } from '../workspace/helpers.js';
import { cellIndices } from '../../shared/schemas/cells.js';

const e2e = serverAndBrowser();

const W = 96, H = 64;
/** Two correlated float channels with fractional and negative values (seeded LCG; common practice). */
function floatPair(seed: number) {
  const ch1 = new Float32Array(W * H), ch2 = new Float32Array(W * H);
  let s = seed;
  const rnd = () => (s = (s * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff;
  for (let y = 0; y < H; y++) {
    for (let x = 0; x < W; x++) {
      const blob = Math.exp(-((x - 40) ** 2 + (y - 30) ** 2) / 300);
      const i = y * W + x;
      ch1[i] = blob + 0.2 * (rnd() - 0.5);
      ch2[i] = 0.6 * blob + 0.3 * (rnd() - 0.5) - 0.05;
    }
  }
  return { ch1, ch2 };
}

/** Pearson's r straight from the definition (Pearson 1896), in float64, over the given pixels. */
function pearson(a: Float32Array, b: Float32Array, idx: Uint32Array) {
  let ma = 0, mb = 0;
  for (const i of idx) (ma += a[i]), (mb += b[i]);
  ma /= idx.length;
  mb /= idx.length;
  let sab = 0, saa = 0, sbb = 0;
  for (const i of idx) {
    sab += (a[i] - ma) * (b[i] - mb);
    saa += (a[i] - ma) ** 2;
    sbb += (b[i] - mb) ** 2;
  }
  return sab / Math.sqrt(saa * sbb);
}

async function demoCoverslip(page: TrackedPage) {
  const studies = (await (await page.request.get(`${e2e.srv.url}/api/studies`)).json()) as { studies: { id: number; isDemo?: boolean }[] };
  const study = studies.studies.find((s) => s.isDemo) ?? studies.studies[0];
  const detail = (await (await page.request.get(`${e2e.srv.url}/api/studies/${study.id}`)).json()) as { conditions: { coverslips: { id: number }[] }[] };
  return { studyId: study.id, coverslipId: detail.conditions[0].coverslips[0].id };
}

/** A new page signed in as the demo microscopist, and the demo study's first coverslip. */
async function microscopistAtDemoCoverslip() {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  return { page, ...(await demoCoverslip(page)) };
}

async function upload(page: TrackedPage, coverslipId: number, files: { name: string; buffer: Buffer }[], plan?: unknown) {
  const form = new FormData();
  if (plan) form.append('plan', JSON.stringify(plan));
  for (const f of files) form.append('files', new Blob([new Uint8Array(f.buffer)], { type: 'image/tiff' }), f.name);
  const up = await page.request.post(`${e2e.srv.url}/api/coverslips/${coverslipId}/fields`, { multipart: form });
  const body = (await up.json()) as { results: { ok: boolean; field?: { id: number; sampleFormat: string; bitDepth: number } }[] };
  expect(up.status(), JSON.stringify(body)).toBe(201);
  const field = body.results[0].field!;
  expect([field.sampleFormat, field.bitDepth]).toEqual(['float', 32]);
  return field.id;
}

const RECT = { kind: 'rect' as const, x: 20, y: 12, width: 40, height: 34 };

async function openWithCell(page: TrackedPage, studyId: number, fieldId: number, name: string, px: { ch1: Float32Array; ch2: Float32Array }, shotName: string) {
  const made = await page.request.post(`${e2e.srv.url}/api/fields/${fieldId}/cells`, { data: { name, geometry: RECT } });
  expect(made.status()).toBe(201);
  const idx = cellIndices(RECT, W, H);
  const want = pearson(px.ch1, px.ch2, idx);
  expect(want).toBeGreaterThan(0.3); // the data are correlated, so a wrong pairing would show

  await page.goto(`${e2e.srv.url}/studies/${studyId}/fields/${fieldId}`);
  await page.getByTestId('pixel-scatter').waitFor({ timeout: 30_000 });
  // counts in words: "1 cell", not "1 cells"
  await page.locator('section', { has: page.getByRole('heading', { name: 'Cells' }) }).getByText('1 cell · 0 background regions', { exact: true }).waitFor();
  const preview = page.getByTestId('live-preview');
  // the whole field first: numbers, not "Computing…"
  await expect.poll(async () => preview.locator('[data-coef="pearson"]').textContent(), { timeout: 20_000 }).toMatch(/^-?\d\.\d{3}$/);
  // then the cell: Pearson's r as computed here from the uploaded pixels
  await page.getByTestId('cells-list').getByText(name, { exact: true }).click();
  await expect.poll(async () => preview.textContent(), { timeout: 20_000 }).toContain(`${idx.length.toLocaleString('en-US')} pixels`);
  await expect.poll(async () => preview.locator('[data-coef="pearson"]').textContent(), { timeout: 20_000 }).toBe(want.toFixed(3));
  await expect.poll(async () => page.locator('section[aria-label="Pixel scatter"]').textContent()).toContain(name);
  expect(await preview.textContent()).not.toContain('Computing…');
  await shot(page, shotName);
}

it('opens a float32 pair (two single-channel files) and shows its scatter and live coefficients', async () => {
  const { page, studyId, coverslipId } = await microscopistAtDemoCoverslip();
  const px = floatPair(11);
  const fieldId = await upload(
    page,
    coverslipId,
    [
      { name: 'float-ch1.tif', buffer: writeTiff([px.ch1], W, H, 32, 'float') },
      { name: 'float-ch2.tif', buffer: writeTiff([px.ch2], W, H, 32, 'float') },
    ],
    [{ name: 'Float pair', ch1: { file: 0, channel: 1 }, ch2: { file: 1, channel: 1 } }],
  );
  await openWithCell(page, studyId, fieldId, 'Float cell A', px, 'float-01-pair');
  expect(page.errors).toEqual([]);
});

it('opens a 2-page float32 file and shows its scatter and live coefficients', async () => {
  const { page, studyId, coverslipId } = await microscopistAtDemoCoverslip();
  const px = floatPair(23);
  const fieldId = await upload(page, coverslipId, [{ name: 'float-2page.tif', buffer: writeTiff([px.ch1, px.ch2], W, H, 32, 'float') }]);
  await openWithCell(page, studyId, fieldId, 'Float cell B', px, 'float-02-two-page');
  expect(page.errors).toEqual([]);
});

it('a pixel message that does not follow the format is shown as an error, not "Computing…" forever', async () => {
  const { page, studyId, coverslipId } = await microscopistAtDemoCoverslip();
  const px = floatPair(5);
  const fieldId = await upload(page, coverslipId, [{ name: 'float-cut.tif', buffer: writeTiff([px.ch1, px.ch2], W, H, 32, 'float') }]);
  // the real answer with its last 10 bytes cut off
  await page.route(`**/api/fields/${fieldId}/pixels*`, async (route) => {
    const res = await route.fetch();
    const body = await res.body();
    await route.fulfill({ response: res, body: body.subarray(0, body.length - 10) });
  });
  await page.goto(`${e2e.srv.url}/studies/${studyId}/fields/${fieldId}`);
  const preview = page.getByTestId('live-preview');
  const alert = preview.getByRole('alert');
  await alert.waitFor({ timeout: 20_000 });
  expect(await alert.textContent()).toMatch(/could not be read: pixel body is 49142 bytes, .* needs 49152 \(truncated\)/);
  expect(await preview.textContent()).not.toContain('Computing…');
  await expect.poll(async () => page.locator('section[aria-label="Pixel scatter"]').getByRole('alert').textContent()).toMatch(/truncated/);
  await shot(page, 'float-03-bad-message');
});
