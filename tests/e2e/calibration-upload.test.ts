/**
 * A bead field uploaded from the calibration screen in the browser, then measured: the demo facility manager is
 * given the microscopist role and the demo lab (as a facility would for the person who images its beads), opens a
 * new calibration version, picks the demo study and one of its coverslips, uploads the bead field with a planted
 * shift (tests/fixtures/calibration/shift1.tif, made by the committed generate.py with scikit-image; truth
 * (−7.42, 5.08) px) through the usual upload dialog, and the new field becomes the bead field: it is stored on
 * that coverslip, recorded on the calibration's instrument, and measuring it fills the shift within 0.05 px of
 * the truth (the tolerance of the fixture checks). Screenshot: test-results/calibration-upload-*.png.
 */
import fs from 'node:fs';
import path from 'node:path';
import { expect, it } from 'vitest';
import { apiSession, measureShiftOnScreen, serverAndBrowser, shot, signIn } from './harness.js';

const e2e = serverAndBrowser();
const FIXTURE = path.join(import.meta.dirname, '..', 'fixtures', 'calibration');
const truth = (JSON.parse(fs.readFileSync(path.join(FIXTURE, 'expected.json'), 'utf8')).shifts as { file: string; truth: { dx: number; dy: number } }[]).find((s) => s.file === 'shift1.tif')!.truth;

it('a facility manager uploads a bead field from the calibration card and measures it', async () => {
  const mgr = await apiSession(e2e.srv, 'manager@demo.test');
  const me = (await mgr('/auth/me')).body.user as { id: number };
  expect((await mgr(`/users/${me.id}`, { method: 'PATCH', body: JSON.stringify({ roles: ['facility_manager', 'microscopist'] }) })).status).toBe(200);
  const lab = ((await mgr('/labs')).body.labs as { id: number; name: string }[]).find((l) => l.name.startsWith('Demo lab'))!;
  expect((await mgr(`/labs/${lab.id}/members/${me.id}`, { method: 'PUT' })).status).toBe(200);
  const inst = await mgr('/instruments', { method: 'POST', body: JSON.stringify({ name: 'Upload stand', objective: '100× / 1.45 oil', channel1: 'GFP', channel2: 'mCherry' }) });
  expect(inst.status).toBe(201);
  const study = ((await mgr('/studies')).body.studies as { id: number; name: string; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const detail = (await mgr(`/studies/${study.id}`)).body as { conditions: { name: string; coverslips: { id: number; name: string }[] }[] };
  const target = detail.conditions[1];
  const slip = target.coverslips[0];
  const before = ((await mgr(`/studies/${study.id}/fields`)).body.fields as { id: number }[]).length;

  const page = await e2e.page();
  await signIn(page, e2e.srv, 'manager@demo.test');
  await page.goto(`${e2e.srv.url}/instruments/${inst.body.id}`);
  await page.getByRole('button', { name: 'New calibration version' }).click();
  await page.getByRole('heading', { name: 'Calibration v1' }).waitFor();
  const studyBox = page.getByLabel('Study holding the fields');
  await expect.poll(() => studyBox.locator('option').count(), { timeout: 10_000 }).toBeGreaterThan(1);
  await studyBox.selectOption({ label: study.name });
  await page.getByLabel('Coverslip for a new field').selectOption({ label: `${target.name} · ${slip.name}` });
  await page.getByRole('button', { name: 'Upload a bead or control field…' }).click();
  const dialog = page.getByRole('dialog', { name: 'Add fields to this coverslip' });
  await dialog.waitFor();
  // recorded on the calibration's instrument unless changed
  await expect.poll(() => dialog.getByLabel('Recorded on').inputValue(), { timeout: 10_000 }).toBe(String(inst.body.id));
  await dialog.getByLabel('Files', { exact: true }).setInputFiles({ name: 'beads-upload.tif', mimeType: 'image/tiff', buffer: fs.readFileSync(path.join(FIXTURE, 'shift1.tif')) });
  await dialog.getByText(/beads-upload\.tif · .* 256×256, 2 channels/).waitFor({ timeout: 30_000 });
  await dialog.getByRole('button', { name: /^Upload/ }).click();
  await dialog.getByText(/1 of 1 field added\./).waitFor({ timeout: 60_000 });
  await shot(page, 'calibration-upload-01-added');
  await dialog.getByRole('button', { name: 'Done' }).click();

  // the new field is stored where it was sent, on this instrument, and is the bead field
  const fields = (await mgr(`/studies/${study.id}/fields`)).body.fields as { id: number; name: string; coverslipId: number; instrumentId: number | null }[];
  expect(fields.length).toBe(before + 1);
  const added = fields.find((f) => f.name === 'beads-upload')!;
  expect(added).toMatchObject({ coverslipId: slip.id, instrumentId: inst.body.id });
  await expect.poll(() => page.getByLabel('Bead field').inputValue(), { timeout: 10_000 }).toBe(String(added.id));
  const { dx, dy } = await measureShiftOnScreen(page);
  expect(Math.abs(dx - truth.dx)).toBeLessThan(0.05);
  expect(Math.abs(dy - truth.dy)).toBeLessThan(0.05);
  expect(await page.getByTestId('source-shift').innerText()).toMatch(/measured on the bead field beads-upload/);
  await shot(page, 'calibration-upload-02-measured');
  expect(page.errors).toEqual([]);
  await page.context().close();
});
