// @vitest-environment jsdom
/** Studies list + create (biologists only), and Home's parts by role with their counts. (common practice) */
import { describe, expect, it } from 'vitest';
import { screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as Studies } from '@/app/routes/Studies';
import { Component as Home } from '@/app/routes/Home';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';
import { makeStudy } from './fixtures';

const { conditions: _c, ...summary } = makeStudy();
const lab = { id: 1, name: 'Test lab', createdAt: '2026-12-01T00:00:00Z', studyCount: 1, members: [{ id: 7, name: 'Ada Demo', email: 'someone@demo.test', roles: ['biologist'] }] };

describe('Studies', () => {
  it('lets a biologist create a study (name checked by the shared schema) and opens it', async () => {
    const calls = mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/studies', () => ({ body: { studies: [summary] } })),
      on('GET', '/labs', () => ({ body: { labs: [lab] } })),
      on('POST', '/studies', () => ({ status: 201, body: { ...makeStudy(), id: 12, name: 'New one' } })),
    );
    const { router } = renderRoutes([{ path: '/studies', Component: Studies }, { path: '/studies/:id', element: <p>study page</p> }], '/studies');
    const user = userEvent.setup();
    expect(await screen.findByRole('link', { name: 'Puncta sharing' })).toBeTruthy();
    await user.click(screen.getByRole('button', { name: 'New study' }));
    const dialog = screen.getByRole('dialog', { name: 'New study' });
    await user.click(within(dialog).getByRole('button', { name: 'Create study' }));
    expect(within(dialog).getByText('enter a study name')).toBeTruthy();
    await user.type(within(dialog).getByLabelText('Study name'), 'New one');
    await user.click(within(dialog).getByRole('button', { name: 'Create study' }));
    await screen.findByText('study page');
    expect(router.state.location.pathname).toBe('/studies/12');
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ name: 'New one', labId: 1 });
  });

  it('offers no “New study” to a microscopist', async () => {
    mockApi(asUser(demoUser(['microscopist'])), on('GET', '/studies', () => ({ body: { studies: [summary] } })));
    renderRoutes([{ path: '/studies', Component: Studies }], '/studies');
    await screen.findByRole('link', { name: 'Puncta sharing' });
    expect(screen.queryByRole('button', { name: 'New study' })).toBeNull();
  });
});

describe('Home by role', () => {
  it('facility manager: review queue count, pending invitations, latest mail', async () => {
    mockApi(
      asUser(demoUser(['facility_manager'])),
      on('GET', '/studies', () => ({ body: { studies: [] } })),
      on('GET', '/recipes?status=submitted', () => ({ body: { recipes: [] } })),
      on('GET', '/users', () => ({
        body: {
          users: [
            { id: 1, email: 'a@x.test', name: 'A', roles: ['biologist'], disabled: false, status: 'invited', labIds: [], createdAt: '2026-12-01' },
            { id: 2, email: 'b@x.test', name: 'B', roles: ['biologist'], disabled: false, status: 'active', labIds: [], createdAt: '2026-12-01' },
          ],
        },
      })),
      on('GET', /^\/outbox/, () => ({ body: { messages: [{ id: 4, from: 's', to: 'a@x.test', subject: 'Your invitation', via: 'sink', receivedAt: '2026-12-01T00:00:00Z' }], nextBefore: null } })),
    );
    renderRoutes([{ path: '/', Component: Home }], '/');
    const tile = await screen.findByRole('link', { name: /Invitations not yet accepted/ });
    await within(tile).findByText('1');
    expect(await screen.findByRole('link', { name: 'Your invitation' })).toBeTruthy();
    expect(screen.queryByRole('heading', { name: 'Shared with you' })).toBeNull();
  });

  it('microscopist: coverslips whose fields have no cells yet', async () => {
    const study = makeStudy(['read', 'add_coverslips', 'edit_images', 'run']);
    mockApi(asUser(demoUser(['microscopist'])), on('GET', '/studies', () => ({ body: { studies: [summary] } })), on('GET', '/studies/3', () => ({ body: study })), on('GET', '/runs', () => ({ body: { runs: [] } })));
    renderRoutes([{ path: '/', Component: Home }], '/');
    expect(await screen.findByText('2 fields, no cells')).toBeTruthy();
    expect(screen.getAllByText('no fields yet')).toHaveLength(2);
    expect(await screen.findByText('No runs yet.')).toBeTruthy();
  });

  it('collaborator: what was shared, with its reports', async () => {
    mockApi(asUser(demoUser(['collaborator'], { id: 99 })), on('GET', '/studies', () => ({ body: { studies: [{ ...summary, permissions: ['read'] }] } })));
    renderRoutes([{ path: '/', Component: Home }], '/');
    expect(await screen.findByRole('heading', { name: 'Shared with you' })).toBeTruthy();
    expect(screen.getByRole('link', { name: 'Reports' }).getAttribute('href')).toBe('/studies/3/reports');
  });
});
