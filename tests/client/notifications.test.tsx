// @vitest-environment jsdom
/** Account → E-mail notices: each kind is a checkbox; unticking one sends the kinds now off, and the answer is shown. (our checks) */
import { describe, expect, it } from 'vitest';
import { screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as Account } from '@/app/routes/Account';
import { NOTIFICATION_KINDS, NOTIFICATION_TEXT, type NotificationKind } from '@shared/schemas/notifications';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const settings = (off: NotificationKind[]) => ({ kinds: NOTIFICATION_KINDS.map((kind) => ({ kind, ...NOTIFICATION_TEXT[kind], on: !off.includes(kind) })) });

describe('Account: e-mail notices', () => {
  it('turns a kind off and on again', async () => {
    let off: NotificationKind[] = ['recipe_reviewed'];
    const calls = mockApi(
      asUser(demoUser(['microscopist'])),
      on('GET', '/tokens', () => ({ body: { tokens: [] } })),
      on('GET', '/notifications', () => ({ body: settings(off) })),
      on('PUT', '/notifications', (c) => {
        off = (c.body as { off: NotificationKind[] }).off;
        return { body: settings(off) };
      }),
    );
    renderRoutes([{ path: '/account', Component: Account }], '/account');
    const run = (await screen.findByLabelText(/Your run finished or failed/)) as HTMLInputElement;
    const reviewed = screen.getByLabelText(/Your recipe is approved or returned/) as HTMLInputElement;
    expect([run.checked, reviewed.checked]).toEqual([true, false]);
    await userEvent.click(run);
    await waitFor(() => expect(run.checked).toBe(false));
    expect(calls.filter((c) => c.method === 'PUT').map((c) => c.body)).toEqual([{ off: ['recipe_reviewed', 'run_finished'] }]);
    await userEvent.click(reviewed);
    await waitFor(() => expect(reviewed.checked).toBe(true));
    expect(calls.filter((c) => c.method === 'PUT').at(-1)!.body).toEqual({ off: ['run_finished'] });
  });
});
