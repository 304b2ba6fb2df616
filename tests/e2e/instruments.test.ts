/**
 * Instruments in the browser on the seeded demo: a facility manager records an instrument, starts its first
 * calibration (a channel shift and both bleed-through fractions), submits it and approves it; the instrument
 * list then names the approved version. The person at the microscope (the demo microscopist, who may edit the
 * demo study's fields; facility managers may not) assigns the instrument to a field in the field workspace,
 * and the field's record carries it; an upload names it for its new field. Screenshots: test-results/instruments-*.png.
 */
import { expect, it } from 'vitest';
import { apiSession, serverAndBrowser, shot, signIn } from './harness.js';
import { tiffPages, twoChannels } from '../security/tiff.js';

const e2e = serverAndBrowser();
let instrumentId = 0;

it('a facility manager records an instrument, gives it a calibration, submits and approves it', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'manager@demo.test');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Instruments' }).click();
  await page.getByRole('heading', { level: 1, name: 'Instruments' }).waitFor();
  await page.getByRole('button', { name: 'Record an instrument' }).click();
  const dialog = page.getByRole('dialog', { name: 'Record an instrument' });
  await dialog.getByLabel('Name').fill('Confocal room 2');
  await dialog.getByLabel('Objective').fill('63× / 1.4 oil');
  await dialog.getByLabel('Channel 1').fill('GFP');
  await dialog.getByLabel('Channel 2').fill('mCherry');
  await shot(page, 'instruments-01-record');
  await dialog.getByRole('button', { name: 'Record instrument' }).click();
  await page.getByRole('heading', { level: 1, name: 'Confocal room 2' }).waitFor();
  instrumentId = Number(/\/instruments\/(\d+)/.exec(page.url())![1]);

  await page.getByRole('button', { name: 'New calibration version' }).click();
  await page.getByRole('heading', { name: 'Calibration v1' }).waitFor();
  await page.getByLabel('Channel shift, x (px)').fill('1.25');
  await page.getByLabel('Channel shift, y (px)').fill('-0.5');
  await page.getByLabel('Bleed-through a21').fill('0.08');
  await page.getByLabel('Bleed-through a12').fill('0.02');
  // the sentences follow the typed values and name the instrument's channels
  expect(await page.getByTestId('shift-sentence').innerText()).toBe('Against GFP, mCherry is shifted 1.25 px to the right and 0.5 px up; runs move it back before measuring, and drop pixels that would come from outside the image.');
  expect(await page.getByTestId('bleed-sentence').innerText()).toContain('8 % of GFP appears in mCherry; 2 % of mCherry appears in GFP');
  await page.getByLabel('How it was measured').fill('Beads on slide 4; single-label controls of 1 December.');
  await page.getByRole('button', { name: 'Save', exact: true }).click();
  await expect.poll(() => page.getByRole('button', { name: 'Submit for review' }).isEnabled(), { timeout: 10_000 }).toBe(true);
  await page.getByRole('button', { name: 'Submit for review' }).click();
  await page.getByText('Awaiting a facility manager\'s review').waitFor();
  await shot(page, 'instruments-02-submitted');
  await page.getByLabel('Note to the proposer').fill('Shift agrees with last month’s beads.');
  await page.getByRole('button', { name: 'Approve v1' }).click();
  await page.getByText('Approved versions never change').waitFor();
  await expect.poll(() => page.getByRole('main').innerText(), { timeout: 10_000 }).toContain('runs apply calibration v1');
  await shot(page, 'instruments-03-approved');

  const mgr = await apiSession(e2e.srv, 'manager@demo.test');
  const detail = (await mgr(`/instruments/${instrumentId}`)).body;
  expect(detail.approved).toMatchObject({ version: 1, status: 'approved', dx: 1.25, dy: -0.5, a21: 0.08, a12: 0.02 });

  await page.getByRole('link', { name: 'Instruments' }).first().click();
  const row = page.getByRole('row', { name: /Confocal room 2/ });
  await row.waitFor();
  // the list shown from the cache refreshes itself (the approval invalidated it)
  await expect.poll(() => row.innerText(), { timeout: 10_000 }).toContain('v1');
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('the microscopist assigns the instrument to a field in its workspace', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  const study = ((await mic('/studies')).body.studies as { id: number; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const field = ((await mic(`/studies/${study.id}/fields`)).body.fields as { id: number; instrumentId: number | null }[])[0];
  expect(field.instrumentId).toBeNull();
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  const picker = page.getByLabel('Recorded on');
  await picker.waitFor({ timeout: 30_000 });
  await expect.poll(() => picker.isEnabled(), { timeout: 10_000 }).toBe(true);
  await picker.selectOption({ label: 'Confocal room 2 · 63× / 1.4 oil' });
  await page.getByText('Approved calibration v1 applies when a recipe asks for it.').waitFor();
  await expect.poll(async () => (await mic(`/fields/${field.id}`)).body.instrumentId, { timeout: 10_000 }).toBe(instrumentId);
  await shot(page, 'instruments-04-field');
  // back to none
  await picker.selectOption({ label: 'None recorded' });
  await expect.poll(async () => (await mic(`/fields/${field.id}`)).body.instrumentId, { timeout: 10_000 }).toBeNull();
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('an upload records the instrument chosen in the dialog on its new field', async () => {
  const mic = await apiSession(e2e.srv, 'microscopist@demo.test');
  const study = ((await mic('/studies')).body.studies as { id: number; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}`);
  await page.getByRole('button', { name: 'Add fields…' }).first().click();
  const dialog = page.getByRole('dialog', { name: 'Add fields to this coverslip' });
  await dialog.getByLabel('Each channel is its own file (pairs)').check();
  const picker = dialog.getByLabel('Recorded on');
  await expect.poll(() => picker.isEnabled(), { timeout: 10_000 }).toBe(true);
  await picker.selectOption({ label: 'Confocal room 2 · 63× / 1.4 oil' });
  const [a, b] = twoChannels(96, 80);
  const files = [
    { name: 'beads7_ch1.tif', bytes: [...tiffPages(96, 80, [a])] },
    { name: 'beads7_ch2.tif', bytes: [...tiffPages(96, 80, [b])] },
  ];
  await dialog.getByTestId('upload-drop').evaluate((el, files) => {
    const dt = new DataTransfer();
    for (const f of files) dt.items.add(new File([new Uint8Array(f.bytes)], f.name, { type: 'image/tiff' }));
    el.dispatchEvent(new DragEvent('dragover', { dataTransfer: dt, bubbles: true, cancelable: true }));
    el.dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
  }, files);
  await dialog.getByText('Channel 2 file: beads7_ch2.tif').waitFor();
  await shot(page, 'instruments-05-upload');
  await dialog.getByRole('button', { name: /^Upload/ }).click();
  await dialog.getByRole('list', { name: 'Upload results' }).getByText('beads7', { exact: true }).waitFor({ timeout: 60_000 });
  const made = ((await mic(`/studies/${study.id}/fields`)).body.fields as { name: string; instrumentId: number | null }[]).find((f) => f.name === 'beads7')!;
  expect(made.instrumentId).toBe(instrumentId);
  expect(page.errors).toEqual([]);
  await page.context().close();
});
