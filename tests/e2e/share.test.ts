/**
 * Browser journey: a biologist freezes a report of the demo study, e-mails it; the message arrives in
 * the embedded SMTP sink (read back through the Outbox API); its personal link opens the read-only report in a
 * fresh browser without an account or the app's frame; the print stylesheet hides the controls; after the link is
 * withdrawn it says so. Screenshots: test-results/share-*.png, the printed PDF: test-results/share-report.pdf.
 */
import { expect, it } from 'vitest';
import fs from 'node:fs';
import { serverAndBrowser, apiSession, shot, signIn } from './harness.js';

const e2e = serverAndBrowser();

const session = (email: string) => apiSession(e2e.srv, email);

it('shares a report by e-mail and the e-mailed link opens it read-only', async () => {
  const bio = await session('biologist@demo.test');
  const studies = (await bio('/studies')).body.studies as { id: number; name: string; isDemo: boolean }[];
  const study = studies.find((s) => s.isDemo)!;
  expect(study).toBeTruthy();
  // measure the demo study when the run queue is available (the report is made either way)
  const recipes = await bio('/recipes?status=approved');
  const recipeId = recipes.status === 200 ? recipes.body.recipes?.[0]?.id : undefined;
  if (recipeId) {
    const run = await bio('/runs', { method: 'POST', body: JSON.stringify({ recipeId, scope: { kind: 'study', id: study.id } }) });
    if (run.status === 201 || run.status === 200) {
      const runId = run.body.id ?? run.body.run?.id;
      for (let i = 0; i < 600; i++) {
        const r = await bio(`/runs/${runId}`);
        if (!['queued', 'running'].includes(r.body.status)) break;
        await new Promise((res) => setTimeout(res, 250));
      }
    }
  }

  // 1. the biologist freezes a report in the browser
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'biologist@demo.test');
  await page.goto(`${e2e.srv.url}/studies/${study.id}/reports`);
  await page.getByRole('button', { name: /new report|make the first report/i }).first().click();
  await page.getByLabel('Title').fill('Treatment raises co-localization');
  await page.getByLabel('Notes').fill('Demo data; for the journey test.');
  await page.getByRole('button', { name: 'Freeze report' }).click();
  await page.waitForURL(/\/reports\/\d+$/);
  await page.getByRole('heading', { name: 'Treatment raises co-localization' }).waitFor();
  await page.getByTestId('methods').waitFor();
  expect(await page.getByTestId('methods').innerText()).toMatch(/Cells and coverslips per condition/);
  await shot(page, 'share-01-report');

  // 2. share it by e-mail
  await page.getByRole('button', { name: 'Share by e-mail' }).click();
  await page.getByLabel('E-mail addresses').fill('reader@example.org');
  await page.getByLabel('Message').fill('The frozen numbers for our discussion.');
  await page.getByRole('button', { name: 'Send links' }).click();
  await page.getByRole('cell', { name: 'reader@example.org' }).waitFor();
  await shot(page, 'share-02-links');

  // 3. the message is in the sink; a manager reads it in the Outbox
  const mgr = await session('manager@demo.test');
  const list = (await mgr('/outbox')).body.messages as { id: number; to: string; via: string }[];
  const msg = list.find((m) => m.to.includes('reader@example.org'))!;
  expect(msg.via).toBe('sink');
  const full = (await mgr(`/outbox/${msg.id}`)).body as { text: string };
  expect(full.text).toContain('The frozen numbers for our discussion.');
  const link = /(https?:\/\/\S+\/shared\/[A-Za-z0-9_.-]+)/.exec(full.text)![1];

  // 4. a fresh browser without an account opens the link
  const reader = await e2e.browser.newContext({ viewport: { width: 1200, height: 900 } });
  const rp = await reader.newPage();
  const errors: string[] = [];
  rp.on('pageerror', (e) => errors.push(e.message));
  await rp.goto(link);
  await rp.getByRole('heading', { name: 'Treatment raises co-localization' }).waitFor();
  expect(await rp.getByRole('navigation', { name: 'Main' }).count()).toBe(0);
  expect(await rp.getByRole('button', { name: 'Share by e-mail' }).count()).toBe(0);
  expect(await rp.getByTestId('methods').innerText()).toMatch(/References/);
  expect(await rp.getByText('Research use only; not for diagnosis.').count()).toBeGreaterThan(0);
  // the reader picks another cell for the pixel scatter by clicking its outline
  const outlines = rp.getByRole('button', { name: /^Show the pixel scatter of/ });
  if ((await outlines.count()) > 1) {
    const cellSelect = rp.getByLabel('Cell for the pixel scatter');
    const before = await cellSelect.inputValue();
    await outlines.last().click();
    expect(await cellSelect.inputValue()).not.toBe(before);
  }
  await rp.screenshot({ path: 'test-results/share-03-shared.png', fullPage: true });
  // print: controls are hidden and the browser makes a PDF
  await rp.emulateMedia({ media: 'print' });
  expect(await rp.getByRole('button', { name: 'Print / PDF' }).isVisible()).toBe(false);
  await rp.screenshot({ path: 'test-results/share-04-print.png', fullPage: true });
  const pdf = await rp.pdf({ format: 'A4' });
  fs.writeFileSync('test-results/share-report.pdf', pdf);
  expect(pdf.length).toBeGreaterThan(10_000);
  await rp.emulateMedia({ media: 'screen' });

  // 5. the owner sees the opening, withdraws the link; the reader is told it no longer works
  await page.reload();
  const row = page.getByRole('row', { name: /reader@example\.org/ });
  await row.waitFor();
  expect(await row.innerText()).toMatch(/\b1\b/);
  await row.getByRole('button', { name: 'Withdraw' }).click();
  await page.getByRole('button', { name: 'Withdraw link' }).click();
  await row.getByText('withdrawn').waitFor();
  await rp.goto(link);
  await rp.getByRole('heading', { name: 'This link no longer works' }).waitFor();
  await rp.screenshot({ path: 'test-results/share-05-withdrawn.png', fullPage: true });
  expect(errors).toEqual([]);
  expect(page.errors).toEqual([]);
  await reader.close();
});
