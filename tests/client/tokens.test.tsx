// @vitest-environment jsdom
/** Account → API tokens: create (shared schema checked first), the secret shown once with copy, list, revoke after confirming. */
import { describe, expect, it } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as Account } from '@/app/routes/Account';
import type { TokenSummary } from '@shared/schemas/tokens';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const SECRET = 'syt_' + 'Qx7'.repeat(14) + 'Z';
const existing: TokenSummary = {
  id: 3,
  name: 'nightly upload',
  scope: 'write',
  hint: 'syt_Ab12',
  state: 'active',
  createdAt: '2026-11-30T08:00:00.000Z',
  expiresAt: '2027-02-28T08:00:00.000Z',
  lastUsedAt: '2026-12-01T21:14:09.000Z',
  revokedAt: null,
};
const made: TokenSummary = { ...existing, id: 4, name: 'plate reader', scope: 'read', hint: SECRET.slice(0, 8), lastUsedAt: null, createdAt: '2026-12-02T06:00:00.000Z', expiresAt: '2027-01-01T06:00:00.000Z' };

describe('Account: API tokens', () => {
  it('creates a token, shows it once with a copy button and a warning, then lists it', async () => {
    let list = [existing];
    const calls = mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/tokens', () => ({ body: { tokens: list } })),
      on('POST', '/tokens', () => {
        list = [made, existing];
        return { status: 201, body: { id: 4, token: SECRET, summary: made } };
      }),
    );
    renderRoutes([{ path: '/account', Component: Account }], '/account');
    const user = userEvent.setup();
    const table = await screen.findByRole('table', { name: 'Your API tokens' });
    const row = within(table).getByText('nightly upload').closest('tr')!;
    expect(within(row).getByText('read and write')).toBeTruthy();
    expect(within(row).getByText('2026-12-01 21:14 UTC')).toBeTruthy();
    expect(within(row).getByText('syt_Ab12…')).toBeTruthy();

    const form = screen.getByRole('form', { name: 'Create an API token' });
    await user.click(within(form).getByRole('button', { name: 'Create token' }));
    expect(within(form).getByText('enter a name saying what the token is for (e.g. "plate-reader script")')).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);

    await user.type(within(form).getByLabelText('Token name'), 'plate reader');
    await user.selectOptions(within(form).getByLabelText('Works for'), '30 days');
    await user.click(within(form).getByRole('button', { name: 'Create token' }));
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ name: 'plate reader', scope: 'read', expiresInDays: 30 });

    const shown = await screen.findByLabelText('New API token');
    expect(shown.textContent).toBe(SECRET);
    expect(screen.getByText(/it will not be shown again/)).toBeTruthy();
    await user.click(screen.getByRole('button', { name: 'Copy' }));
    expect(await navigator.clipboard.readText()).toBe(SECRET);
    expect(screen.getByRole('button', { name: 'Copied' })).toBeTruthy();
    // the list is fetched again and shows the new token without its secret
    await waitFor(() => expect(within(screen.getByRole('table', { name: 'Your API tokens' })).getByText('plate reader')).toBeTruthy());
    expect(within(screen.getByRole('table', { name: 'Your API tokens' })).queryByText(SECRET)).toBeNull();
    await user.click(screen.getByRole('button', { name: 'I have stored it' }));
    expect(screen.queryByLabelText('New API token')).toBeNull();
  });

  it('shows the refusal of the server in the form and no secret', async () => {
    mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/tokens', () => ({ body: { tokens: [] } })),
      on('POST', '/tokens', () => ({ status: 409, body: { error: 'you already have 50 active API tokens (at most 50); revoke one you no longer use first' } })),
    );
    renderRoutes([{ path: '/account', Component: Account }], '/account');
    const user = userEvent.setup();
    expect(await screen.findByText('No API tokens yet.')).toBeTruthy();
    const form = screen.getByRole('form', { name: 'Create an API token' });
    await user.type(within(form).getByLabelText('Token name'), 'one too many');
    await user.click(within(form).getByRole('button', { name: 'Create token' }));
    expect((await within(form).findByRole('alert')).textContent).toMatch(/already have 50 active API tokens/);
    expect(screen.queryByLabelText('New API token')).toBeNull();
  });

  it('revokes only after confirmation', async () => {
    let list = [existing];
    const calls = mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/tokens', () => ({ body: { tokens: list } })),
      on('DELETE', '/tokens/3', () => {
        const revoked = { ...existing, state: 'revoked' as const, revokedAt: '2026-12-02T06:10:00.000Z' };
        list = [revoked];
        return { body: revoked };
      }),
    );
    renderRoutes([{ path: '/account', Component: Account }], '/account');
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Revoke nightly upload' }));
    let dialog = screen.getByRole('alertdialog', { name: 'Revoke this token?' });
    expect(within(dialog).getByText(/"nightly upload" \(syt_Ab12…\) will be refused/)).toBeTruthy();
    await user.click(within(dialog).getByRole('button', { name: 'Cancel' }));
    expect(calls.some((c) => c.method === 'DELETE')).toBe(false);
    await user.click(screen.getByRole('button', { name: 'Revoke nightly upload' }));
    dialog = screen.getByRole('alertdialog', { name: 'Revoke this token?' });
    await user.click(within(dialog).getByRole('button', { name: 'Revoke token' }));
    await waitFor(() => expect(screen.queryByRole('alertdialog')).toBeNull());
    expect(calls.filter((c) => c.method === 'DELETE').map((c) => c.path)).toEqual(['/tokens/3']);
    expect(await screen.findByText('revoked 2026-12-02 06:10 UTC')).toBeTruthy();
    expect(screen.queryByRole('button', { name: 'Revoke nightly upload' })).toBeNull();
  });
});
