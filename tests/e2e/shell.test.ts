/**
 * Each demo account signs in through the real server and sees what its role allows: its places in the main
 * navigation, its part of Home, and (for the biologist) study structure editing end to end.
 * Screenshots: test-results/shell-*.png. (common practice)
 */
import { describe, expect, it } from 'vitest';
import { serverAndBrowser, shot, signIn, type TrackedPage } from './harness.js';

const e2e = serverAndBrowser();

const navOf = async (page: TrackedPage) => {
  const nav = page.getByRole('navigation', { name: 'Main' });
  await nav.waitFor();
  return (await nav.getByRole('link').allTextContents()).map((s) => s.trim());
};

describe('demo accounts in the browser', () => {
  it('facility manager: review queue, people, outbox', async () => {
    const page = await e2e.page();
    await signIn(page, e2e.srv, 'manager@demo.test');
    expect(await navOf(page)).toEqual(['Home', 'Studies', 'Recipes', 'Review queue', 'Runs', 'People & labs', 'Outbox', 'Facility usage', 'Instruments', 'Account', 'API reference']);
    await page.getByRole('heading', { name: 'Facility', exact: true }).waitFor();
    await page.getByText('Recipes waiting for review').waitFor();
    await shot(page, 'shell-manager-home');
    await page.getByRole('link', { name: 'People & labs' }).click();
    await page.getByRole('heading', { name: 'People', exact: true }).waitFor();
    for (const e of ['manager@demo.test', 'microscopist@demo.test', 'biologist@demo.test', 'collaborator@demo.test']) await page.getByText(e, { exact: true }).first().waitFor();
    await shot(page, 'shell-manager-people');
    await page.getByRole('link', { name: 'Outbox' }).click();
    await page.getByRole('heading', { name: 'Outbox' }).waitFor();
    await shot(page, 'shell-manager-outbox');
    await page.getByRole('link', { name: 'Facility usage' }).click();
    await page.getByRole('heading', { name: 'Facility usage' }).waitFor();
    await page.getByRole('table').waitFor();
    await page.getByRole('link', { name: 'API reference' }).click();
    await page.getByRole('heading', { name: 'API reference' }).waitFor();
    await page.getByText(/^\d+ of \d+ routes$/).waitFor(); // the real document, parsed by the shared schema
    expect(page.errors).toEqual([]);
    await page.context().close();
  });

  it('microscopist: fields and runs on Home; no people or outbox', async () => {
    const page = await e2e.page();
    await signIn(page, e2e.srv, 'microscopist@demo.test');
    expect(await navOf(page)).toEqual(['Home', 'Studies', 'Recipes', 'Runs', 'Account', 'API reference']);
    await page.getByRole('heading', { name: 'Imaging', exact: true }).waitFor();
    await page.getByRole('heading', { name: 'Fields waiting for cells' }).waitFor();
    await shot(page, 'shell-microscopist-home');
    await page.goto(`${e2e.srv.url}/people`);
    await page.getByRole('heading', { name: 'Nothing here' }).waitFor();
    expect(page.errors).toEqual([]);
    await page.context().close();
  });

  it('biologist: own studies on Home; adds, renames, moves and deletes a condition', async () => {
    const page = await e2e.page();
    await signIn(page, e2e.srv, 'biologist@demo.test');
    expect(await navOf(page)).toEqual(['Home', 'Studies', 'Recipes', 'Runs', 'Account', 'API reference']);
    await page.getByRole('heading', { name: 'Your studies', exact: true }).waitFor();
    await shot(page, 'shell-biologist-home');
    await page.getByRole('link', { name: 'Studies' }).click();
    await page.getByRole('heading', { name: 'Studies', level: 1 }).waitFor();
    await page.getByRole('table').getByRole('link').first().click();
    await page.getByRole('navigation', { name: 'Study pages' }).waitFor();
    // the fields feature's list and upload load lazily into each coverslip
    await expect.poll(() => page.getByText(/Loading/).count(), { timeout: 30_000 }).toBe(0);
    await shot(page, 'shell-biologist-study');
    const before = await page.getByRole('heading', { level: 2 }).count();

    await page.getByRole('button', { name: 'Add condition' }).first().click();
    const add = page.getByRole('dialog', { name: 'Add a condition' });
    await add.getByLabel('Condition name').fill('Browser check');
    await add.getByRole('button', { name: 'Add condition' }).click();
    await page.getByRole('heading', { name: 'Browser check', level: 2, exact: true }).waitFor();
    expect(await page.getByRole('heading', { level: 2 }).count()).toBe(before + 1);

    await page.getByRole('button', { name: 'Rename condition Browser check' }).click();
    const ren = page.getByRole('dialog', { name: 'Rename condition' });
    await ren.getByLabel('Condition name').fill('Browser check 2');
    await ren.getByRole('button', { name: 'Rename' }).click();
    await page.getByRole('heading', { name: 'Browser check 2', level: 2, exact: true }).waitFor();

    await page.getByRole('button', { name: 'Move condition Browser check 2 up' }).click();
    await page.getByRole('status').filter({ hasText: 'moved to position' }).waitFor({ state: 'attached' });

    await page.getByRole('button', { name: 'Delete condition Browser check 2' }).click();
    await page.getByRole('alertdialog').getByRole('button', { name: 'Delete condition' }).click();
    await page.getByRole('heading', { name: 'Browser check 2', level: 2, exact: true }).waitFor({ state: 'detached' });
    await shot(page, 'shell-biologist-study-after');
    expect(page.errors).toEqual([]);
    await page.context().close();
  });

  it('collaborator: only what was shared; signs out', async () => {
    const page = await e2e.page();
    await signIn(page, e2e.srv, 'collaborator@demo.test');
    expect(await navOf(page)).toEqual(['Home', 'Studies', 'Account', 'API reference']);
    await page.getByRole('heading', { name: 'Shared with you', exact: true }).waitFor();
    await shot(page, 'shell-collaborator-home');
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/\/signin/);
    await page.getByRole('button', { name: 'Sign in' }).waitFor();
    await shot(page, 'shell-signin');
    await page.goto(`${e2e.srv.url}/account`);
    await page.waitForURL(/\/signin\?next=%2Faccount/);
    expect(page.errors).toEqual([]);
    await page.context().close();
  });

  it('invitation: the manager invites, opens the mail in the Outbox, the link sets a password and signs in', async () => {
    const page = await e2e.page();
    await signIn(page, e2e.srv, 'manager@demo.test');
    await page.getByRole('link', { name: 'People & labs' }).click();
    await page.getByRole('button', { name: 'Invite a person' }).click();
    const dialog = page.getByRole('dialog', { name: 'Invite a person' });
    await dialog.getByLabel('E-mail').fill('newcomer@demo.test');
    await dialog.getByLabel('Name').fill('New Comer');
    await dialog.getByRole('checkbox', { name: /Biologist/ }).check();
    await shot(page, 'shell-manager-invite');
    await dialog.getByRole('button', { name: 'Send invitation' }).click();
    await page.getByText('An invitation was sent to newcomer@demo.test.').waitFor();
    await page.getByRole('link', { name: 'Outbox' }).first().click();
    await page.getByRole('button', { name: /newcomer@demo\.test/ }).first().click();
    const link = page.getByRole('link', { name: /\/invite\// }).first();
    await link.waitFor();
    await shot(page, 'shell-manager-outbox-message');
    const href = (await link.getAttribute('href'))!;
    const token = new URL(href).pathname;
    await page.context().close();

    const guest = await e2e.page();
    await guest.goto(e2e.srv.url + token);
    await guest.getByRole('heading', { name: 'Welcome, New Comer' }).waitFor();
    await guest.getByLabel('New password').fill('a-fresh-password');
    await guest.getByLabel('Repeat the password').fill('a-fresh-password');
    await shot(guest, 'shell-accept-invite');
    await guest.getByRole('button', { name: 'Set password and sign in' }).click();
    await guest.getByRole('heading', { name: 'Hello, New Comer' }).waitFor();
    expect(guest.errors).toEqual([]);
    await guest.context().close();
  });
});
