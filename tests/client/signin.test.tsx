// @vitest-environment jsdom
/** Sign-in: the form refuses what LoginRequest refuses (no request sent), shows server errors, follows ?next=. (common practice) */
import { describe, expect, it } from 'vitest';
import { screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as SignIn } from '@/app/routes/SignIn';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const routes = [
  { path: '/signin', Component: SignIn },
  { path: '/studies', element: <p>studies page</p> },
  { path: '/', element: <p>home page</p> },
];

describe('SignIn', () => {
  it('shows the shared schema’s messages beside the fields and sends nothing', async () => {
    const calls = mockApi(asUser(null));
    renderRoutes(routes, '/signin');
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Sign in' }));
    const email = screen.getByLabelText('E-mail');
    expect(email.getAttribute('aria-invalid')).toBe('true');
    expect(document.getElementById(email.getAttribute('aria-describedby')!)?.textContent).toBe('enter an e-mail address');
    expect(screen.getByText('enter your password')).toBeTruthy();
    expect(calls.filter((c) => c.path === '/auth/login')).toHaveLength(0);
  });

  it('shows a server field issue beside its field, and the generic failure above the button', async () => {
    let attempt = 0;
    mockApi(
      asUser(null),
      on('POST', '/auth/login', () =>
        ++attempt === 1
          ? { status: 400, body: { error: 'email: enter an e-mail address', issues: [{ path: 'email', message: 'server says: not an address' }] } }
          : { status: 401, body: { error: 'that e-mail and password do not match an active account' } },
      ),
    );
    renderRoutes(routes, '/signin');
    const user = userEvent.setup();
    await user.type(await screen.findByLabelText('E-mail'), 'a@b.test');
    await user.type(screen.getByLabelText('Password'), 'wrong');
    await user.click(screen.getByRole('button', { name: 'Sign in' }));
    expect(await screen.findByText('server says: not an address')).toBeTruthy();
    expect(screen.getByLabelText('E-mail').getAttribute('aria-invalid')).toBe('true');
    await user.click(screen.getByRole('button', { name: 'Sign in' }));
    expect((await screen.findByRole('alert')).textContent).toBe('that e-mail and password do not match an active account');
  });

  it('signs in with the normalized e-mail and goes to ?next=', async () => {
    const me = demoUser(['biologist']);
    const calls = mockApi(asUser(null), on('POST', '/auth/login', () => ({ body: { user: me } })));
    const { router } = renderRoutes(routes, '/signin?next=%2Fstudies');
    const user = userEvent.setup();
    await user.type(await screen.findByLabelText('E-mail'), ' Biologist@Demo.test');
    await user.type(screen.getByLabelText('Password'), 'syntopy-demo');
    await user.keyboard('{Enter}');
    await screen.findByText('studies page');
    expect(router.state.location.pathname).toBe('/studies');
    expect(calls.find((c) => c.path === '/auth/login')?.body).toEqual({ email: 'biologist@demo.test', password: 'syntopy-demo' });
  });

  it('ignores a ?next= that leaves the site', async () => {
    mockApi(asUser(demoUser(['collaborator'])));
    const { router } = renderRoutes(routes, '/signin?next=https%3A%2F%2Fevil.test%2F');
    await screen.findByText('home page');
    await waitFor(() => expect(router.state.location.pathname).toBe('/'));
  });
});
