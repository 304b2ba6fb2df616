/**
 * Measuring a calibration in the browser on the seeded demo: a bead field with a planted diagonal shift
 * (tests/fixtures/calibration/shift1.tif, made by the committed generate.py; truth (−7.42, 5.08) px) is uploaded
 * to the demo study through the upload route; the facility manager opens a new calibration version, chooses
 * the field, measures, and sees the shift filled in (within 0.05 px of the truth), the cross-correlation
 * curves with the measured shift marked on each axis and the composite before and after alignment. Once the
 * version is approved, the collaborator (read-only in the demo study) sees the field's instrument as text in
 * the workspace header and the workspace's alignment panel measures the field's own shift and aligns the
 * main image by it when asked. Screenshots: test-results/calibration-*.png.
 */
import fs from 'node:fs';
import path from 'node:path';
import { expect, it } from 'vitest';
import { apiSession, DEMO_PASSWORD, measureShiftOnScreen, serverAndBrowser, shot, signIn } from './harness.js';

const e2e = serverAndBrowser();
const FIXTURE = path.join(import.meta.dirname, '..', 'fixtures', 'calibration');
const truth = (JSON.parse(fs.readFileSync(path.join(FIXTURE, 'expected.json'), 'utf8')).shifts as { file: string; truth: { dx: number; dy: number } }[]).find((s) => s.file === 'shift1.tif')!.truth;
let setup = { studyId: 0, studyName: '', fieldId: 0, instrumentId: 0 };

it('a facility manager measures a new calibration on a bead field and sees the curves and the composite', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  const mgr = await apiSession(e2e.srv, 'manager@demo.test');
  const study = ((await mic('/studies')).body.studies as { id: number; name: string; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const coverslipId = (await mic(`/studies/${study.id}`)).body.conditions[0].coverslips[0].id as number;
  // the bead field goes in through the upload route, as from the study page
  const login = await fetch(`${e2e.srv.url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'microscopist@demo.test', password: DEMO_PASSWORD }) });
  const cookie = (login.headers.get('set-cookie') ?? '').split(';')[0];
  const form = new FormData();
  form.append('files', new Blob([fs.readFileSync(path.join(FIXTURE, 'shift1.tif'))], { type: 'image/tiff' }), 'beads-shift1.tif');
  const up = await fetch(`${e2e.srv.url}/api/coverslips/${coverslipId}/fields`, { method: 'POST', headers: { cookie }, body: form });
  const upBody = (await up.json()) as { results: { ok: boolean; field: { id: number } }[] };
  expect(up.status, JSON.stringify(upBody)).toBe(201);
  const fieldId = upBody.results[0].field.id;
  const inst = await mgr('/instruments', { method: 'POST', body: JSON.stringify({ name: 'Bead stand', objective: '60× / 1.4 oil', channel1: 'GFP', channel2: 'mCherry' }) });
  expect(inst.status).toBe(201);
  setup = { studyId: study.id, studyName: study.name, fieldId, instrumentId: inst.body.id };

  const page = await e2e.page();
  await signIn(page, e2e.srv, 'manager@demo.test');
  await page.goto(`${e2e.srv.url}/instruments/${setup.instrumentId}`);
  await page.getByRole('button', { name: 'New calibration version' }).click();
  await page.getByRole('heading', { name: 'Calibration v1' }).waitFor();
  const studyBox = page.getByLabel('Study holding the fields');
  await expect.poll(() => studyBox.locator('option').count(), { timeout: 10_000 }).toBeGreaterThan(1);
  await studyBox.selectOption({ label: study.name });
  await page.getByLabel('Bead field').selectOption({ label: 'beads-shift1 (256 × 256)' });
  const { dx, dy } = await measureShiftOnScreen(page);
  expect(Math.abs(dx - truth.dx)).toBeLessThan(0.05);
  expect(Math.abs(dy - truth.dy)).toBeLessThan(0.05);
  expect(await page.getByTestId('source-shift').innerText()).toMatch(/^Shift \(-7\.\d\d, 5\.\d\d\) px measured on the bead field beads-shift1 \(single plane; correlation peak 0\.\d{3}\)/);
  // the curves, each with the measured shift marked, drawn through the other axis's whole-pixel shift
  await page.getByTestId('curve-x-mark').waitFor({ state: 'attached' });
  await page.getByTestId('curve-y-mark').waitFor({ state: 'attached' });
  expect(await page.getByTestId('curve-x').getAttribute('aria-label')).toMatch(/along x, from -10 to 10 px, with y held at 5 px; measured shift -7\.\d\d px/);
  expect(await page.getByTestId('curve-y').getAttribute('aria-label')).toMatch(/along y, from -10 to 10 px, with x held at -7 px; measured shift 5\.\d\d px/);
  // the composite, aligned and as recorded
  const state = page.getByTestId('alignment-composite-state');
  await expect.poll(() => state.innerText(), { timeout: 30_000 }).toMatch(/^Showing channel 2 aligned by \(-7\.\d\d, 5\.\d\d\) px\./);
  const canvas = page.getByRole('img', { name: /^Composite of both channels/ });
  await expect.poll(() => canvas.evaluate((c) => (c as HTMLCanvasElement).width), { timeout: 10_000 }).toBe(256);
  await shot(page, 'calibration-01-measured');
  await page.getByLabel('Align channel 2').uncheck();
  await expect.poll(() => state.innerText(), { timeout: 30_000 }).toMatch(/^Showing channel 2 as recorded\./);
  await shot(page, 'calibration-02-as-recorded');
  // still a draft: submitted and approved as any other version
  await page.getByRole('button', { name: 'Submit for review' }).click();
  await page.getByText("Awaiting a facility manager's review").waitFor();
  await page.getByRole('button', { name: 'Approve v1' }).click();
  await page.getByText('Approved versions never change').waitFor();
  const v = (await mgr(`/instruments/${setup.instrumentId}`)).body.approved;
  expect(v).toMatchObject({ version: 1, dx, dy });
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('a read-only member sees the instrument as text and the field’s alignment in the workspace', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  expect((await mic(`/fields/${setup.fieldId}/instrument`, { method: 'PUT', body: JSON.stringify({ instrumentId: setup.instrumentId }) })).status).toBe(200);
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'collaborator@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${setup.studyId}/fields/${setup.fieldId}`);
  expect(await page.getByTestId('field-instrument-text').innerText({ timeout: 30_000 })).toBe(' · recorded on Bead stand');
  expect(await page.getByLabel('Recorded on').count()).toBe(0);
  // collaborators may not read instruments: the panel measures the field's own shift
  const panel = page.getByTestId('alignment-panel');
  await panel.getByRole('button', { name: "Measure this field's shift" }).click();
  await panel.getByTestId('cross-correlation').waitFor({ timeout: 60_000 });
  expect(await panel.getByTestId('field-shift').innerText()).toMatch(/^Measured on this field: \(-7\.\d\d, 5\.\d\d\) px/);
  await expect.poll(() => panel.getByTestId('alignment-composite-state').innerText(), { timeout: 30_000 }).toMatch(/^Showing channel 2 aligned by \(-7\.\d\d, 5\.\d\d\) px\./);
  // the main image too: drawn in the browser with channel 2 aligned, instead of the server's preview
  await panel.getByLabel('Align channel 2 in the main image too').check();
  await page.getByTestId('field-viewer').locator('img[data-aligned="true"]').waitFor({ timeout: 30_000 });
  await shot(page, 'calibration-03-workspace');
  await panel.getByLabel('Align channel 2 in the main image too').uncheck();
  await expect.poll(() => page.getByTestId('field-viewer').locator('img[data-aligned="true"]').count(), { timeout: 10_000 }).toBe(0);
  expect(page.errors).toEqual([]);
  await page.context().close();
});
