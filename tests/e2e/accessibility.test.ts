/**
 * Accessibility pass: axe-core (WCAG 2.x A/AA rules plus best practices) runs over every screen of every role
 * on the seeded demo, and no screen may have a serious or critical violation. Screens: signed out (sign-in, a
 * dead invitation link, a shared report and a dead share link), then each demo role's screens of the main
 * navigation and the study pages it can reach (study, field workspace, Cell table, Compare, Reports, a frozen
 * report, recipe editor, an instrument with its calibrations and a measured shift's curves and composite,
 * the workspace's channel alignment after measuring, the collaborator's read-only workspace), and the dialogs met on the way (workspace keys
 * and find cells, upload, share, new report, record an instrument). The structure rules region,
 * landmark-one-main, heading-order, empty-table-header, page-has-heading-one and landmark-unique are held as
 * well. Screenshots: test-results/a11y-<role>-<screen>.png.
 * Rule levels are axe-core's own impact ratings (axe-core 4.14 documentation).
 */
import { expect, it } from 'vitest';
import { apiSession, demoMeasured, serverAndBrowser, shot, signIn, type TrackedPage } from './harness.js';
import { scan, type Found } from './axe.js';

const e2e = serverAndBrowser();
/** waits until the screen has loaded its data */
async function settled(page: TrackedPage) {
  await page.waitForLoadState('networkidle');
  await expect.poll(async () => page.getByText(/^Loading/).count(), { timeout: 30_000 }).toBe(0);
  await page.waitForTimeout(150);
}

const problems: Record<string, Found[]> = {};

async function check(page: TrackedPage, label: string, path: string, ready?: (p: TrackedPage) => Promise<unknown>) {
  await page.goto(`${e2e.srv.url}${path}`);
  await page.getByRole('main').first().waitFor();
  if (ready) await ready(page);
  await settled(page);
  await shot(page, `a11y-${label}`);
  const found = await scan(page);
  if (found.length) problems[label] = found;
  return found;
}

const report = () =>
  Object.entries(problems)
    .map(([screen, vs]) => `${screen}:\n${vs.map((v) => `  [${v.impact}] ${v.id}: ${v.help}\n${v.nodes.map((n) => `      ${n}`).join('\n')}`).join('\n')}`)
    .join('\n');

let demo = { studyId: 0, fieldId: 0, reportId: 0, recipeId: 0, shareLink: '', instrumentId: 0 };

it('prepares a frozen report and a share link on the demo study', async () => {
  const bio = await apiSession(e2e.srv, 'biologist@demo.test');
  const study = ((await bio('/studies')).body.studies as { id: number; isDemo: boolean }[]).find((s) => s.isDemo)!;
  const fields = (await bio(`/studies/${study.id}/fields`)).body.fields as { id: number }[];
  await demoMeasured(bio, study.id);
  const made = await bio(`/studies/${study.id}/reports`, { method: 'POST', body: JSON.stringify({ title: 'Accessibility check', coefficients: ['pearson', 'mandersM1'] }) });
  expect(made.status, JSON.stringify(made.body)).toBeLessThan(300);
  const reportId = made.body.id ?? made.body.report?.id;
  const share = await bio(`/reports/${reportId}/shares`, { method: 'POST', body: JSON.stringify({ emails: ['reader@example.org'], message: 'For the check.' }) });
  expect(share.status).toBe(201);
  const mgr = await apiSession(e2e.srv, 'manager@demo.test');
  const msgs = (await mgr('/outbox')).body.messages as { id: number; to: string }[];
  const msg = msgs.find((m) => m.to.includes('reader@example.org'))!;
  const text = (await mgr(`/outbox/${msg.id}`)).body.text as string;
  const recipes = (await mgr('/recipes')).body.recipes as { id: number }[];
  // an instrument with an approved calibration (v1) and a draft after it (v2), shown on the Instruments screens
  const inst = await mgr('/instruments', { method: 'POST', body: JSON.stringify({ name: 'Accessibility stand', objective: '40× / 1.3 oil', channel1: 'GFP', channel2: 'mCherry' }) });
  expect(inst.status, JSON.stringify(inst.body)).toBe(201);
  const v1 = await mgr(`/instruments/${inst.body.id}/calibrations`, { method: 'POST', body: JSON.stringify({ dx: 0.4, dy: -1.1, a21: 0.05, a12: 0.01 }) });
  for (const step of ['submit', 'approve']) expect((await mgr(`/calibrations/${v1.body.id}/${step}`, { method: 'POST', body: '{}' })).status).toBe(200);
  const v2 = await mgr(`/instruments/${inst.body.id}/calibrations`, { method: 'POST', body: '{}' });
  expect(v2.status).toBe(201);
  // v2's shift measured on a demo field, so its screen shows the curves and the composite
  const measured = await mgr(`/calibrations/${v2.body.id}/measure-shift`, { method: 'POST', body: JSON.stringify({ fieldId: fields[0].id }) });
  expect(measured.status, JSON.stringify(measured.body)).toBe(200);
  demo = { studyId: study.id, fieldId: fields[0].id, reportId, recipeId: recipes[0].id, shareLink: new URL(/(https?:\/\/\S+\/shared\/[A-Za-z0-9_.-]+)/.exec(text)![1]).pathname, instrumentId: inst.body.id };
});

it('signed out: sign-in, a dead invitation, a shared report, a dead share link', async () => {
  const page = await e2e.page();
  await check(page, 'anonymous-signin', '/signin');
  await check(page, 'anonymous-invite', '/invite/not-a-token', (p) => p.getByRole('heading', { level: 1 }).waitFor());
  await check(page, 'anonymous-shared-report', demo.shareLink, (p) => p.getByTestId('methods').waitFor());
  await check(page, 'anonymous-shared-dead', '/shared/not-a-token', (p) => p.getByRole('heading', { level: 1 }).waitFor());
  await page.context().close();
});

const roleScreens: Record<string, () => [string, string, ((p: TrackedPage) => Promise<unknown>)?][]> = {
  manager: () => [
    ['home', '/'],
    ['studies', '/studies'],
    ['study', `/studies/${demo.studyId}`],
    ['recipes', '/recipes'],
    ['recipe', `/recipes/${demo.recipeId}`],
    ['review', '/review'],
    ['runs', '/runs'],
    ['people', '/people'],
    ['outbox', '/outbox'],
    ['instruments', '/instruments'],
    ['instrument', `/instruments/${demo.instrumentId}`, async (p) => (await p.getByRole('heading', { name: 'Calibration v2' }).waitFor(), await p.getByTestId('cross-correlation').waitFor(), await p.getByText(/^Showing channel 2 aligned by/).waitFor({ timeout: 30_000 }))],
    ['account', '/account'],
    ['not-found', '/no-such-page'],
  ],
  microscopist: () => [
    ['home', '/'],
    ['studies', '/studies'],
    ['study', `/studies/${demo.studyId}`],
    ['workspace', `/studies/${demo.studyId}/fields/${demo.fieldId}`, (p) => p.getByTestId('pixel-scatter').waitFor({ timeout: 30_000 })],
    [
      'workspace-alignment',
      `/studies/${demo.studyId}/fields/${demo.fieldId}`,
      async (p) => (await p.getByRole('button', { name: "Measure this field's shift" }).click(), await p.getByTestId('cross-correlation').waitFor({ timeout: 30_000 })),
    ],
    ['recipes', '/recipes'],
    ['runs', '/runs'],
    ['account', '/account'],
  ],
  biologist: () => [
    ['home', '/'],
    ['studies', '/studies'],
    ['study', `/studies/${demo.studyId}`],
    ['cell-table', `/studies/${demo.studyId}/cell-table`, (p) => p.getByRole('table').first().waitFor()],
    ['compare', `/studies/${demo.studyId}/compare`],
    ['reports', `/studies/${demo.studyId}/reports`],
    ['report', `/reports/${demo.reportId}`, (p) => p.getByTestId('methods').waitFor()],
    ['runs', '/runs'],
    ['account', '/account'],
  ],
  collaborator: () => [
    ['home', '/'],
    ['studies', '/studies'],
    ['workspace', `/studies/${demo.studyId}/fields/${demo.fieldId}`, (p) => p.getByTestId('field-instrument-text').waitFor({ timeout: 30_000 })],
    ['account', '/account'],
  ],
};

/** dialogs, each opened on its screen: [label, path, open it] */
const roleDialogs: Record<string, () => [string, string, (p: TrackedPage) => Promise<unknown>][]> = {
  manager: () => [['instruments-record', '/instruments', (p) => p.getByRole('button', { name: 'Record an instrument' }).click()]],
  microscopist: () => [
    ['workspace-keys', `/studies/${demo.studyId}/fields/${demo.fieldId}`, async (p) => (await p.getByTestId('pixel-scatter').waitFor({ timeout: 30_000 }), await p.keyboard.press('?'))],
    ['workspace-find-cells', `/studies/${demo.studyId}/fields/${demo.fieldId}`, (p) => p.getByRole('button', { name: 'Find cells…' }).click()],
    ['study-upload', `/studies/${demo.studyId}`, (p) => p.getByRole('button', { name: 'Add fields…' }).first().click()],
  ],
  biologist: () => [
    ['report-share', `/reports/${demo.reportId}`, (p) => p.getByRole('button', { name: 'Share by e-mail' }).click()],
    ['reports-new', `/studies/${demo.studyId}/reports`, (p) => p.getByRole('button', { name: /new report|make the first report/i }).first().click()],
  ],
};

for (const [role, screens] of Object.entries(roleScreens)) {
  it(`${role}: every screen`, async () => {
    const page = await e2e.page();
    await signIn(page, e2e.srv, `${role}@demo.test`);
    for (const [name, path, ready] of screens()) await check(page, `${role}-${name}`, path, ready);
    for (const [name, path, open] of roleDialogs[role]?.() ?? [])
      await check(page, `${role}-${name}`, path, async (p) => {
        await settled(p);
        await open(p);
        await p.getByRole('dialog').waitFor();
      });
    expect(page.errors).toEqual([]);
    await page.context().close();
  });
}

it('no serious or critical violation (nor a structure one) on any screen', () => {
  expect(report()).toBe('');
});
