// @vitest-environment jsdom
/** People (invite form, disable with confirmation), Outbox (links clickable), AcceptInvite (expired link, password rule). (common practice) */
import { describe, expect, it } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as People } from '@/app/routes/People';
import { Component as Outbox } from '@/app/routes/Outbox';
import { Component as AcceptInvite } from '@/app/routes/AcceptInvite';
import { splitLinks } from '@/features/outbox/components/LinkifiedText';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const manager = demoUser(['facility_manager'], { id: 1, name: 'Mira Manager', email: 'manager@demo.test' });
const users = [
  { id: 1, email: 'manager@demo.test', name: 'Mira Manager', roles: ['facility_manager'], disabled: false, status: 'active', labIds: [1], createdAt: '2026-12-01T00:00:00Z' },
  { id: 2, email: 'micro@demo.test', name: 'Milo Micro', roles: ['microscopist'], disabled: false, status: 'active', labIds: [1], createdAt: '2026-12-01T00:00:00Z' },
  { id: 3, email: 'new@demo.test', name: 'Nia New', roles: ['biologist'], disabled: false, status: 'invited', labIds: [], createdAt: '2026-12-01T00:00:00Z' },
];
const labs = [{ id: 1, name: 'Demo lab', createdAt: '2026-12-01T00:00:00Z', studyCount: 1, members: users.slice(0, 2).map(({ id, name, email, roles }) => ({ id, name, email, roles })) }];

describe('People', () => {
  it('is a not-found page for anyone but a facility manager', async () => {
    const calls = mockApi(asUser(demoUser(['biologist'])));
    renderRoutes([{ path: '/people', Component: People }], '/people');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
    expect(calls.some((c) => c.path === '/users')).toBe(false);
  });

  it('invites with the shared schema and shows the server’s e-mail error beside the field', async () => {
    const calls = mockApi(
      asUser(manager),
      on('GET', '/users', () => ({ body: { users } })),
      on('GET', '/labs', () => ({ body: { labs } })),
      on('POST', '/users', () => ({ status: 409, body: { error: 'email: exists', issues: [{ path: 'email', message: 'an account with this e-mail exists' }] } })),
    );
    renderRoutes([{ path: '/people', Component: People }], '/people');
    const user = userEvent.setup();
    expect(await screen.findByRole('rowheader', { name: /Nia New/ })).toBeTruthy();
    await user.click(screen.getByRole('button', { name: 'Invite a person' }));
    const dialog = screen.getByRole('dialog', { name: 'Invite a person' });
    await user.click(within(dialog).getByRole('button', { name: 'Send invitation' }));
    expect(within(dialog).getByText('choose at least one role')).toBeTruthy();
    expect(within(dialog).getByText('enter an e-mail address')).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);
    await user.type(within(dialog).getByLabelText('E-mail'), 'micro@demo.test');
    await user.type(within(dialog).getByLabelText('Name'), 'Milo Again');
    await user.click(within(dialog).getByRole('checkbox', { name: /Microscopist/ }));
    await user.click(within(dialog).getByRole('button', { name: 'Send invitation' }));
    expect(await within(dialog).findByText('an account with this e-mail exists')).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ email: 'micro@demo.test', name: 'Milo Again', roles: ['microscopist'], labIds: [1] });
  });

  it('disables an account only after confirming, and never offers to disable oneself', async () => {
    const calls = mockApi(
      asUser(manager),
      on('GET', '/users', () => ({ body: { users } })),
      on('GET', '/labs', () => ({ body: { labs } })),
      on('PATCH', '/users/2', () => ({ body: { ...users[1], disabled: true, status: 'disabled' } })),
    );
    renderRoutes([{ path: '/people', Component: People }], '/people');
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Disable Milo Micro' }));
    expect(screen.queryByRole('button', { name: 'Disable Mira Manager' })).toBeNull();
    await user.click(within(screen.getByRole('alertdialog')).getByRole('button', { name: 'Disable account' }));
    await waitFor(() => expect(calls.find((c) => c.method === 'PATCH')?.body).toEqual({ disabled: true }));
  });
});

describe('Outbox', () => {
  it('turns addresses in mail text into links and leaves the sentence’s full stop out', () => {
    expect(splitLinks('Open http://127.0.0.1:3000/invite/abc. Thanks')).toEqual([
      { kind: 'text', text: 'Open ' },
      { kind: 'link', href: 'http://127.0.0.1:3000/invite/abc' },
      { kind: 'text', text: '. Thanks' },
    ]);
    expect(splitLinks('no links here')).toEqual([{ kind: 'text', text: 'no links here' }]);
    expect(splitLinks('javascript:alert(1)')).toEqual([{ kind: 'text', text: 'javascript:alert(1)' }]);
  });

  it('lists messages and opens one with a clickable invitation link', async () => {
    const summary = { id: 5, from: 'Syntopy <noreply@syntopy.test>', to: 'new@demo.test', subject: 'You are invited to Syntopy', via: 'sink', receivedAt: '2026-12-01T10:00:00Z' };
    mockApi(
      asUser(manager),
      on('GET', /^\/outbox\?limit=50$/, () => ({ body: { messages: [summary], nextBefore: null } })),
      on('GET', '/outbox/5', () => ({ body: { ...summary, messageId: '<x@y>', text: 'Set your password: http://localhost:3000/invite/tok123\n', html: null } })),
    );
    renderRoutes([{ path: '/outbox', Component: Outbox }], '/outbox');
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: /You are invited to Syntopy/ }));
    const link = await screen.findByRole('link', { name: 'http://localhost:3000/invite/tok123' });
    expect(link.getAttribute('href')).toBe('http://localhost:3000/invite/tok123');
    // the list and the message show the one date format, with its time zone
    expect(screen.getAllByText('2026-12-01 10:00 UTC')).toHaveLength(2);
  });
});

describe('AcceptInvite', () => {
  const routes = [{ path: '/invite/:token', Component: AcceptInvite }, { path: '/', element: <p>home</p> }];

  it('says plainly when the link was used or expired', async () => {
    mockApi(on('GET', '/auth/invitations/old', () => ({ status: 410, body: { error: 'gone' } })));
    renderRoutes(routes, '/invite/old');
    expect((await screen.findByRole('alert')).textContent).toMatch(/already used or has expired/);
  });

  it('holds the password to the server rule, then signs in', async () => {
    const calls = mockApi(
      on('GET', '/auth/invitations/tok', () => ({ body: { email: 'new@demo.test', name: 'Nia New', roles: ['biologist'], expiresAt: '2026-12-08T00:00:00Z' } })),
      on('POST', '/auth/invitations/tok/accept', () => ({ body: { user: { id: 3, email: 'new@demo.test', name: 'Nia New', roles: ['biologist'] } } })),
    );
    const { router } = renderRoutes(routes, '/invite/tok');
    const user = userEvent.setup();
    await user.type(await screen.findByLabelText('New password'), 'short');
    await user.click(screen.getByRole('button', { name: 'Set password and sign in' }));
    expect(screen.getByText('use at least 10 characters')).toBeTruthy();
    await user.clear(screen.getByLabelText('New password'));
    await user.type(screen.getByLabelText('New password'), 'a-long-password');
    await user.type(screen.getByLabelText('Repeat the password'), 'a-long-passwort');
    await user.click(screen.getByRole('button', { name: 'Set password and sign in' }));
    expect(screen.getByText('the two passwords differ')).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);
    await user.clear(screen.getByLabelText('Repeat the password'));
    await user.type(screen.getByLabelText('Repeat the password'), 'a-long-password');
    await user.click(screen.getByRole('button', { name: 'Set password and sign in' }));
    await screen.findByText('home');
    expect(router.state.location.pathname).toBe('/');
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ password: 'a-long-password' });
  });
});
