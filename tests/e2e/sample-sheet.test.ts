/**
 * "Add by sample sheet" on the study page, in the browser, on the seeded demo: the demo biologist (who may add
 * conditions and coverslips and upload fields) chooses a sheet with bad rows and sees each named by its line,
 * with nothing stored and nothing to send; then a clean sheet naming a new condition and two new coverslips,
 * with a two-page file and a file pair: checking lists what will be created, sending stores both fields with
 * the sheet's names and pixel size under the new coverslips; checking the same sheet again recognises both
 * rows and every file as already uploaded (what a resumed upload relies on). Screenshots:
 * test-results/sample-sheet-*.png.
 */
import { expect, it } from 'vitest';
import { apiSession, serverAndBrowser, shot, signIn } from './harness.js';
import { tiffPages, twoChannels } from '../security/tiff.js';

const e2e = serverAndBrowser();
const W = 64, H = 48;
const [c1, c2] = twoChannels(W, H);
const tiff = (pages: Uint16Array[]) => ({ mimeType: 'image/tiff', buffer: tiffPages(W, H, pages) });
const csv = (name: string, text: string) => ({ name, mimeType: 'text/csv', buffer: Buffer.from(text) });

it('checks a sample sheet line by line, then creates what it names and sends its files with one progress bar', async () => {
  const bio = await apiSession(e2e.srv, 'biologist@demo.test');
  const study = ((await bio('/studies')).body.studies as { id: number; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const conditionsBefore = (await bio(`/studies/${study.id}`)).body.conditions as { name: string }[];
  const fieldCount = async () => ((await bio(`/studies/${study.id}/fields`)).body.fields as unknown[]).length;
  const fieldsBefore = await fieldCount();

  const page = await e2e.page();
  await signIn(page, e2e.srv, 'biologist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}`);
  await page.getByRole('button', { name: 'Add by sample sheet' }).click();
  const dialog = page.getByRole('dialog', { name: 'Add fields by sample sheet' });
  await dialog.waitFor();
  const files = [
    { name: 'sheet-a.tif', ...tiff([c1, c2]) },
    { name: 'sheet-b1.tif', ...tiff([c1]) },
    { name: 'sheet-b2.tif', ...tiff([c2]) },
  ];
  await dialog.getByLabel('Image files').setInputFiles(files);

  // a sheet with two bad rows: each is named by its line, nothing is created, nothing can be sent
  await dialog
    .getByLabel('Sample sheet (CSV)')
    .setInputFiles(csv('bad.csv', 'file,file2,condition,coverslip,name,pixel_size_um\nsheet-a.tif,,sheet treated,SS1,Field A,0.1\nsheet-b1.tif,sheet-b2.tif,sheet treated,SS2,Field B,abc\nsheet-a.tif,,,SS3,Field C,\n'));
  await dialog.getByRole('button', { name: 'Check sheet' }).click();
  const status = dialog.getByRole('status');
  await status.getByText('2 rows to correct before anything is stored:').waitFor();
  expect(await status.getByRole('listitem').allInnerTexts()).toEqual(['Line 3: pixel_size_um must be a number of µm above 0 (at most 1000), got "abc"', 'Line 4: the condition is empty']);
  expect(await dialog.getByRole('button', { name: 'Send files' }).isDisabled()).toBe(true);
  await shot(page, 'sample-sheet-01-problems');
  expect(((await bio(`/studies/${study.id}`)).body.conditions as unknown[]).length).toBe(conditionsBefore.length);

  // the corrected sheet: what will be created is listed; sending stores both fields
  const good = 'file,file2,condition,coverslip,name,pixel_size_um\nsheet-a.tif,,sheet treated,SS1,Field A,0.1\nsheet-b1.tif,sheet-b2.tif,sheet treated,SS2,Field B,\n';
  await dialog.getByLabel('Sample sheet (CSV)').setInputFiles(csv('good.csv', good));
  await dialog.getByRole('button', { name: 'Check sheet' }).click();
  await expect.poll(() => status.innerText(), { timeout: 15_000 }).toBe('2 rows ready; new conditions: sheet treated; new coverslips: sheet treated / SS1, sheet treated / SS2.');
  await shot(page, 'sample-sheet-02-checked');
  await dialog.getByRole('button', { name: 'Send files' }).click();
  // (the check's line stays above the outcome)
  await dialog.getByRole('status').filter({ hasText: 'fields stored' }).getByText('2 fields stored.', { exact: true }).waitFor({ timeout: 30_000 });
  await shot(page, 'sample-sheet-03-stored');

  expect(await fieldCount()).toBe(fieldsBefore + 2);
  const detail = (await bio(`/studies/${study.id}`)).body as { conditions: { id: number; name: string; coverslips: { id: number; name: string }[] }[] };
  const made = detail.conditions.find((c) => c.name === 'sheet treated')!;
  expect(made.coverslips.map((s) => s.name).sort()).toEqual(['SS1', 'SS2']);
  const fields = (await bio(`/studies/${study.id}/fields`)).body.fields as { name: string; coverslipId: number; pixelSizeUm: number | null }[];
  const slipId = (name: string) => made.coverslips.find((s) => s.name === name)!.id;
  expect(fields.find((f) => f.name === 'Field A')).toMatchObject({ coverslipId: slipId('SS1'), pixelSizeUm: 0.1 });
  expect(fields.find((f) => f.name === 'Field B')).toMatchObject({ coverslipId: slipId('SS2') });

  // the same sheet again: both rows are on their coverslips already, every file is stored
  await dialog.getByRole('button', { name: 'Check sheet' }).click();
  await expect.poll(() => status.innerText(), { timeout: 15_000 }).toBe('2 rows ready, 2 already uploaded, 3 files already stored.');
  expect(page.errors).toEqual([]);
  await page.context().close();
}, 120_000);
