// @vitest-environment jsdom
/** The Shell: signed-out users go to sign-in with ?next=; each role sees its own places; sign-out works. (common practice) */
import { describe, expect, it } from 'vitest';
import { screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Shell } from '@/app/Shell';
import type { Role } from '@shared/schemas/auth';
import { homeSections } from '@/features/home/lib/sections';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const routes = [
  { path: '/signin', element: <p>sign-in page</p> },
  { path: '/', Component: Shell, children: [{ index: true, element: <p>home</p> }, { path: 'studies/:id', element: <p>a study</p> }] },
];

const navNames = async () => {
  const nav = await screen.findByRole('navigation', { name: 'Main' });
  return within(nav)
    .getAllByRole('link')
    .map((a) => a.textContent);
};

describe('Shell navigation by role', () => {
  const cases: [Role, string[]][] = [
    ['facility_manager', ['Home', 'Studies', 'Recipes', 'Review queue', 'Runs', 'People & labs', 'Outbox', 'Facility usage', 'Instruments', 'Account', 'API reference']],
    ['microscopist', ['Home', 'Studies', 'Recipes', 'Runs', 'Account', 'API reference']],
    ['biologist', ['Home', 'Studies', 'Recipes', 'Runs', 'Account', 'API reference']],
    ['collaborator', ['Home', 'Studies', 'Account', 'API reference']],
  ];
  for (const [role, expected] of cases) {
    it(`${role} sees ${expected.length} places`, async () => {
      mockApi(asUser(demoUser([role])));
      renderRoutes(routes, '/');
      expect(await navNames()).toEqual(expected);
    });
  }

  it('a person with two roles sees the union', async () => {
    mockApi(asUser(demoUser(['microscopist', 'facility_manager'])));
    renderRoutes(routes, '/');
    expect(await navNames()).toContain('Outbox');
  });

  it('sends a signed-out visitor to sign-in, remembering where they were going', async () => {
    mockApi(asUser(null));
    const { router } = renderRoutes(routes, '/studies/4');
    await screen.findByText('sign-in page');
    expect(router.state.location.pathname + router.state.location.search).toBe('/signin?next=%2Fstudies%2F4');
  });

  it('signs out and lands on sign-in', async () => {
    const calls = mockApi(asUser(demoUser(['biologist'])), on('POST', '/auth/logout', () => ({ body: { ok: true } })));
    const { router } = renderRoutes(routes, '/');
    await userEvent.setup().click(await screen.findByRole('button', { name: 'Sign out' }));
    await screen.findByText('sign-in page');
    expect(router.state.location.pathname).toBe('/signin');
    expect(calls.some((c) => c.method === 'POST' && c.path === '/auth/logout')).toBe(true);
  });
});

describe('Home sections by role', () => {
  it('shows each role’s part once, in a fixed order', () => {
    expect(homeSections(['facility_manager'])).toEqual(['manager']);
    expect(homeSections(['microscopist'])).toEqual(['microscopist']);
    expect(homeSections(['biologist'])).toEqual(['biologist']);
    expect(homeSections(['collaborator'])).toEqual(['collaborator']);
    expect(homeSections(['microscopist', 'biologist', 'facility_manager'])).toEqual(['manager', 'biologist', 'microscopist']);
    expect(homeSections(['collaborator', 'biologist'])).toEqual(['biologist']);
    expect(homeSections([])).toEqual([]);
  });
});
