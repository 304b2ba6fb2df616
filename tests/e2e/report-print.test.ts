/**
 * The printed report (issue 19, item 8): a frozen report of the demo study printed to PDF by Chromium
 * (page.pdf(), the same engine as the browser's "Save as PDF") and read back (./pdf-text.ts): the document title is
 * the study and the report title; every page carries "Page n of N"; pages after the first carry the running
 * header; page 1 holds the result and the start of its table rather than being left mostly blank; no page ends with a
 * heading whose text went to the next page. Screenshot: test-results/report-print.png, PDF:
 * test-results/report-print.pdf. (common practice for printed documents)
 */
import fs from 'node:fs';
import { expect, it } from 'vitest';
import { apiSession, demoMeasured, serverAndBrowser, signIn } from './harness.js';
import { readPdf } from './pdf-text.js';

const e2e = serverAndBrowser();
const TITLE = 'Printed: treatment and shared puncta';
/** text without white space: the PDF's glyph runs break words and lines where the layout placed them */
const squash = (s: string) => s.replace(/\s+/g, '');

it('prints with page numbers, a running header, the report as the document title and sensible breaks', async () => {
  const bio = await apiSession(e2e.srv, 'biologist@demo.test');
  const study = ((await bio('/studies')).body.studies as { id: number; name: string; isDemo: boolean }[]).find((s) => s.isDemo)!;
  await demoMeasured(bio, study.id);
  const made = await bio(`/studies/${study.id}/reports`, { method: 'POST', body: JSON.stringify({ title: TITLE, notes: 'Printed for the layout check.', coefficients: ['pearson', 'spearman', 'mandersM1', 'mandersM2'] }) });
  expect(made.status, JSON.stringify(made.body)).toBeLessThan(300);
  const reportId = made.body.id ?? made.body.report?.id;

  const page = await e2e.page();
  await signIn(page, e2e.srv, 'biologist@demo.test');
  await page.goto(`${e2e.srv.url}/reports/${reportId}`);
  await page.getByTestId('methods').waitFor();
  await page.waitForLoadState('networkidle');
  const heading = `${study.name} · ${TITLE}`;
  expect(await page.title()).toBe(heading);
  await page.emulateMedia({ media: 'print' });
  fs.mkdirSync('test-results', { recursive: true });
  await page.screenshot({ path: 'test-results/report-print.png', fullPage: true });
  const pdf = await page.pdf({ format: 'A4', preferCSSPageSize: true });
  fs.writeFileSync('test-results/report-print.pdf', pdf);
  await page.emulateMedia({ media: 'screen' });

  const { pages, title } = readPdf(pdf);
  expect(title).toBe(heading);
  const n = pages.length;
  expect(n).toBeGreaterThanOrEqual(2);
  pages.forEach((text, i) => {
    expect(squash(text), `page ${i + 1} number`).toContain(`Page${i + 1}of${n}`);
    if (i > 0) expect(squash(text), `page ${i + 1} running header`).toContain(squash(heading));
  });
  // page 1 is not left mostly blank: the title block, the result sentences and the start of the statistics table
  // are on it (a section kept whole moved the next one to page 2 and left 75 % of page 1 empty)
  const first = squash(pages[0]);
  for (const s of [TITLE, 'Result', "Pearson'sr.Meanofcoverslipmeans", 'Effect(95%interval)']) expect(first, `page 1 has ${s}`).toContain(squash(s));
  expect(first.length, 'characters on page 1').toBeGreaterThan(1000);

  // no heading is the last thing on a page: something of its section follows it on the same page
  const headings = ['Result', 'Cells by coverslip', 'Per-condition summaries', 'Representative fields', 'Pixel scatter of one cell', 'Data used', 'Excluded cells', 'Methods', 'References', 'Cautions'].map(squash);
  const margin = (line: string) => /^Page\d+of\d+$/.test(line) || line === squash(heading) || line === squash('Syntopy · research use only');
  pages.slice(0, -1).forEach((text, i) => {
    const lines = text.split('\n').map(squash).filter((l) => l && !margin(l));
    const last = lines.findLastIndex((l) => headings.includes(l));
    if (last < 0) return;
    const after = lines.slice(last + 1).join('');
    expect(after.length, `page ${i + 1} ends with the heading "${lines[last]}" alone`).toBeGreaterThan(20);
  });
  expect(page.errors).toEqual([]);
  await page.context().close();
});
