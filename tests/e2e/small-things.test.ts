/**
 * The small things of issue 19 (item 9), each in the browser on the seeded demo: focus lands on the main
 * heading after sign-in; dialogs open on their first field; the share dialog names the wrong address; files
 * dropped onto the upload dialog are added, and a pair is named after both of its files; the Cells list's
 * buttons carry words; at 640 px wide (a 1280 px window at 200 % zoom) the sidebar folds into a menu and no
 * screen scrolls sideways. Screenshots: test-results/small-*.png. (common practice; WCAG 2.1 SC 1.4.10 reflow)
 */
import { expect, it } from 'vitest';
import { apiSession, serverAndBrowser, shot, signIn, type TrackedPage } from './harness.js';
import { tiffPages, twoChannels } from '../security/tiff.js';

const e2e = serverAndBrowser();

const focused = (page: TrackedPage) =>
  page.evaluate(() => {
    const a = document.activeElement as HTMLElement | null;
    return a ? `${a.tagName.toLowerCase()}:${(a.getAttribute('aria-label') ?? a.textContent ?? '').trim().slice(0, 60)}` : '';
  });

async function demo() {
  const bio = await apiSession(e2e.srv, 'biologist@demo.test');
  const study = ((await bio('/studies')).body.studies as { id: number; name: string; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const fields = (await bio(`/studies/${study.id}/fields`)).body.fields as { id: number; coverslipId: number }[];
  return { bio, study, fields };
}

it('focus: the main heading after sign-in and after moving to another page; a dialog on its first field', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'biologist@demo.test');
  await expect.poll(() => focused(page), { timeout: 10_000 }).toBe('h1:Hello, Demo Biologist');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Studies' }).click();
  await expect.poll(() => focused(page), { timeout: 10_000 }).toBe('h1:Studies');
  const { study } = await demo();
  await page.goto(`${e2e.srv.url}/studies/${study.id}`);
  await page.getByRole('button', { name: 'Add condition' }).first().click();
  const add = page.getByRole('dialog', { name: 'Add a condition' });
  await add.waitFor();
  await expect.poll(() => page.evaluate(() => (document.activeElement as HTMLInputElement | null)?.labels?.[0]?.textContent ?? '')).toContain('Condition name');
  await shot(page, 'small-01-dialog-focus');
  await page.keyboard.press('Escape');
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('the share dialog names the address that is wrong', async () => {
  const { bio, study } = await demo();
  const made = await bio(`/studies/${study.id}/reports`, { method: 'POST', body: JSON.stringify({ title: 'Addresses check', coefficients: ['pearson'] }) });
  expect(made.status).toBeLessThan(300);
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'biologist@demo.test');
  await page.goto(`${e2e.srv.url}/reports/${made.body.id ?? made.body.report?.id}`);
  await page.getByRole('button', { name: 'Share by e-mail' }).click();
  const dialog = page.getByRole('dialog', { name: 'Share by e-mail' });
  await expect.poll(() => focused(page)).toMatch(/^textarea:/);
  await page.keyboard.type('reader@example.org, colleague(at)example.org; second@example');
  await dialog.getByRole('button', { name: 'Send links' }).click();
  const box = dialog.getByLabel('E-mail addresses');
  await expect.poll(async () => (await dialog.innerText()).includes('"colleague(at)example.org", "second@example" are not e-mail addresses')).toBe(true);
  expect(await box.getAttribute('aria-invalid')).toBe('true');
  expect(await dialog.innerText()).not.toContain('"reader@example.org"');
  await shot(page, 'small-02-share-wrong-address');
  // the server names it too (the same schema): one wrong address sent past the dialog
  const direct = await bio(`/reports/${made.body.id ?? made.body.report?.id}/shares`, { method: 'POST', body: JSON.stringify({ emails: ['ok@example.org', 'nobody-at-example'] }) });
  expect(direct.status).toBe(400);
  expect(JSON.stringify(direct.body)).toContain('\\"nobody-at-example\\" is not an e-mail address');
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('files dropped on the upload dialog are added; a pair is named after both files', async () => {
  const { study } = await demo();
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}`);
  await page.getByRole('button', { name: 'Add fields…' }).first().click();
  const dialog = page.getByRole('dialog', { name: 'Add fields to this coverslip' });
  await dialog.waitFor();
  await dialog.getByLabel('Each channel is its own file (pairs)').check();
  const [a, b] = twoChannels(96, 80);
  const files = [
    { name: 'dropcell7_ch1.tif', bytes: [...tiffPages(96, 80, [a])] },
    { name: 'dropcell7_ch2.tif', bytes: [...tiffPages(96, 80, [b])] },
  ];
  // a drop as the browser delivers one: dragover then drop with the files in a DataTransfer
  await dialog.getByTestId('upload-drop').evaluate((el, files) => {
    const dt = new DataTransfer();
    for (const f of files) dt.items.add(new File([new Uint8Array(f.bytes)], f.name, { type: 'image/tiff' }));
    el.dispatchEvent(new DragEvent('dragover', { dataTransfer: dt, bubbles: true, cancelable: true }));
    el.dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
  }, files);
  const pair = dialog.getByRole('list', { name: 'Pairs to add' }).getByRole('listitem').first();
  await expect.poll(() => pair.getByLabel('Field name').inputValue()).toBe('dropcell7');
  await pair.getByText('Channel 2 file: dropcell7_ch2.tif').waitFor();
  await shot(page, 'small-03-dropped-pair');
  await dialog.getByRole('button', { name: /^Upload/ }).click();
  await dialog.getByRole('list', { name: 'Upload results' }).getByText('dropcell7', { exact: true }).waitFor({ timeout: 60_000 });
  await dialog.getByRole('button', { name: 'Done' }).click();
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('the Cells list buttons carry words', async () => {
  const { study, fields, bio } = await demo();
  let withCells = fields[0];
  for (const f of fields)
    if (((await bio(`/fields/${f.id}/cells`)).body.cells as unknown[]).length > 0) {
      withCells = f;
      break;
    }
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${withCells.id}`);
  const list = page.getByTestId('cells-list');
  await list.waitFor({ timeout: 30_000 });
  const first = list.getByRole('listitem').first();
  for (const [name, word] of [[/^Rename /, 'Rename'], [/^Mark .* as background$/, 'Background'], [/^Delete /, 'Delete']] as const) {
    const button = first.getByRole('button', { name });
    expect((await button.innerText()).trim()).toBe(word);
    expect(await button.getAttribute('title')).toMatch(name);
  }
  await shot(page, 'small-04-cell-buttons');
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('at 640 px wide the sidebar folds into a menu and no screen scrolls sideways', async () => {
  const { study, fields, bio } = await demo();
  const reports = (await bio(`/studies/${study.id}/reports`)).body.reports as { id: number }[];
  const page = await e2e.page();
  await page.setViewportSize({ width: 640, height: 800 });
  await signIn(page, e2e.srv, 'biologist@demo.test');
  const nav = page.getByRole('navigation', { name: 'Main' });
  const screens: [string, string][] = [
    ['home', '/'],
    ['studies', '/studies'],
    ['study', `/studies/${study.id}`],
    ['workspace', `/studies/${study.id}/fields/${fields[0].id}`],
    ['cell-table', `/studies/${study.id}/cell-table`],
    ['compare', `/studies/${study.id}/compare`],
    ['reports', `/studies/${study.id}/reports`],
    ...(reports.length ? [['report', `/reports/${reports[0].id}`] as [string, string]] : []),
    ['recipes', '/recipes'],
    ['runs', '/runs'],
    ['account', '/account'],
  ];
  const wide: string[] = [];
  for (const [name, path] of screens) {
    await page.goto(`${e2e.srv.url}${path}`);
    await page.getByRole('main').locator('h1').first().waitFor({ timeout: 30_000 });
    await page.waitForLoadState('networkidle');
    await expect.poll(() => page.getByText(/^Loading/).count(), { timeout: 30_000 }).toBe(0);
    expect(await nav.isVisible(), `${name}: sidebar folded`).toBe(false);
    const over = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    if (over > 0) wide.push(`${name} (${over} px wider)`);
    await shot(page, `small-05-640-${name}`);
  }
  // the facility manager's own screens
  const mgr = await e2e.page();
  await mgr.setViewportSize({ width: 640, height: 800 });
  await signIn(mgr, e2e.srv, 'manager@demo.test');
  for (const [name, path] of [['review', '/review'], ['people', '/people'], ['outbox', '/outbox']]) {
    await mgr.goto(`${e2e.srv.url}${path}`);
    await mgr.getByRole('main').locator('h1').first().waitFor({ timeout: 30_000 });
    await mgr.waitForLoadState('networkidle');
    const over = await mgr.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    if (over > 0) wide.push(`manager ${name} (${over} px wider)`);
    await shot(mgr, `small-05-640-manager-${name}`);
  }
  expect(mgr.errors).toEqual([]);
  await mgr.context().close();
  expect(wide, 'screens that scroll sideways at 640 px').toEqual([]);
  await page.getByRole('button', { name: 'Menu' }).click();
  await nav.getByRole('link', { name: 'Studies' }).click();
  await page.getByRole('heading', { name: 'Studies', level: 1 }).waitFor();
  expect(await nav.isVisible(), 'a chosen place folds the menu again').toBe(false);
  expect(page.errors).toEqual([]);
  await page.context().close();
});
