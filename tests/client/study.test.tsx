// @vitest-environment jsdom
/**
 * Study page: reorder by buttons (keyboard), delete behind a confirmation, forms checked with the shared
 * schemas and server errors beside the field, controls hidden from read-only members. (common practice)
 */
import { describe, expect, it } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as Study } from '@/app/routes/Study';
import { asUser, demoUser, mockApi as baseMockApi, on, renderRoutes, type Handler } from './utils';

/** the fields feature lists each coverslip's fields: none here */
const mockApi = (...h: Handler[]) => baseMockApi(...h, on('GET', /^\/coverslips\/\d+\/fields$/, () => ({ body: { fields: [] } })));
import { makeStudy } from './fixtures';

const routes = [
  { path: '/studies/:studyId', Component: Study },
  { path: '/studies', element: <p>studies list</p> },
];

describe('Study page', () => {
  it('lists conditions and coverslips with links to Runs, Cell table, Compare and Reports', async () => {
    mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/3', () => ({ body: makeStudy() })));
    renderRoutes(routes, '/studies/3');
    expect(await screen.findByRole('heading', { level: 1, name: 'Puncta sharing' })).toBeTruthy();
    expect(screen.getByRole('heading', { name: 'Control' })).toBeTruthy();
    expect(screen.getByRole('heading', { name: 'Treated' })).toBeTruthy();
    const links = within(screen.getByRole('navigation', { name: 'Study pages' })).getAllByRole('link');
    expect(links.map((a) => a.getAttribute('href'))).toEqual(['/runs?studyId=3', '/studies/3/cell-table', '/studies/3/compare', '/studies/3/reports']);
    expect(screen.getByText('no cells outlined')).toBeTruthy();
  });

  it('shows each coverslip\'s field list and, for those who may upload, the upload button', async () => {
    mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/3', () => ({ body: makeStudy() })));
    renderRoutes(routes, '/studies/3');
    await screen.findByRole('heading', { level: 1, name: 'Puncta sharing' });
    const slots = document.querySelectorAll('[data-slot="fields"]');
    expect(slots.length).toBeGreaterThan(0);
    for (const slot of slots) {
      expect(await within(slot as HTMLElement).findByText('No fields on this coverslip yet.')).toBeTruthy();
      expect(within(slot as HTMLElement).getByRole('button', { name: 'Add fields…' })).toBeTruthy();
    }
  });

  it('moves a condition down with the keyboard and sends the new order', async () => {
    const study = makeStudy();
    const calls = mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/studies/3', () => ({ body: study })),
      on('POST', '/studies/3/reorder', () => ({ body: { ...study, conditions: [study.conditions[1], study.conditions[0]] } })),
    );
    renderRoutes(routes, '/studies/3');
    const down = await screen.findByRole('button', { name: 'Move condition Control down' });
    expect((screen.getByRole('button', { name: 'Move condition Control up' }) as HTMLButtonElement).disabled).toBe(true);
    down.focus();
    await userEvent.setup().keyboard('{Enter}');
    await waitFor(() => expect(calls.find((c) => c.path === '/studies/3/reorder')?.body).toEqual({ conditionIds: [11, 10] }));
    await waitFor(() => expect(screen.getAllByRole('heading', { level: 2 }).map((h) => h.textContent).slice(0, 2)).toEqual(['Treated', 'Control']));
    expect((await screen.findByText('Condition Control moved to position 2 of 2.')).getAttribute('aria-live')).toBe('polite');
  });

  it('moves a coverslip within its condition', async () => {
    const study = makeStudy();
    const calls = mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/3', () => ({ body: study })), on('POST', '/studies/3/reorder', () => ({ body: study })));
    renderRoutes(routes, '/studies/3');
    await userEvent.setup().click(await screen.findByRole('button', { name: 'Move coverslip Coverslip 2 up' }));
    await waitFor(() => expect(calls.find((c) => c.path === '/studies/3/reorder')?.body).toEqual({ coverslips: [{ conditionId: 10, coverslipIds: [101, 100] }] }));
  });

  it('deletes a coverslip only after confirming; Cancel sends nothing', async () => {
    const study = makeStudy();
    const calls = mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/3', () => ({ body: study })), on('DELETE', '/coverslips/101', () => ({ body: study })));
    renderRoutes(routes, '/studies/3');
    const user = userEvent.setup();
    const opener = await screen.findByRole('button', { name: 'Delete coverslip Coverslip 2' });
    await user.click(opener);
    let dialog = screen.getByRole('alertdialog', { name: 'Delete coverslip “Coverslip 2”?' });
    expect(document.activeElement?.textContent).toBe('Cancel');
    await user.keyboard('{Escape}');
    expect(screen.queryByRole('alertdialog')).toBeNull();
    expect(document.activeElement).toBe(opener);
    expect(calls.some((c) => c.method === 'DELETE')).toBe(false);
    await user.click(opener);
    dialog = screen.getByRole('alertdialog');
    await user.click(within(dialog).getByRole('button', { name: 'Delete coverslip' }));
    await waitFor(() => expect(screen.queryByRole('alertdialog')).toBeNull());
    expect(calls.filter((c) => c.method === 'DELETE').map((c) => c.path)).toEqual(['/coverslips/101']);
  });

  it('keeps Tab inside an open dialog', async () => {
    mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/3', () => ({ body: makeStudy() })));
    renderRoutes(routes, '/studies/3');
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Delete condition Treated' }));
    const dialog = screen.getByRole('alertdialog');
    for (let i = 0; i < 5; i++) {
      await user.tab();
      expect(dialog.contains(document.activeElement)).toBe(true);
    }
  });

  it('checks a new condition name with the shared schema, then shows the server’s error beside it', async () => {
    const calls = mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/studies/3', () => ({ body: makeStudy() })),
      on('POST', '/studies/3/conditions', () => ({ status: 400, body: { error: 'name: a condition with this name exists', issues: [{ path: 'name', message: 'a condition with this name exists' }] } })),
    );
    renderRoutes(routes, '/studies/3');
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Add condition' }));
    const dialog = screen.getByRole('dialog', { name: 'Add a condition' });
    await user.click(within(dialog).getByRole('button', { name: 'Add condition' }));
    expect(within(dialog).getByText('enter a condition name')).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);
    await user.type(within(dialog).getByLabelText('Condition name'), 'Control');
    await user.click(within(dialog).getByRole('button', { name: 'Add condition' }));
    expect(await within(dialog).findByText('a condition with this name exists')).toBeTruthy();
    expect(within(dialog).getByLabelText('Condition name').getAttribute('aria-invalid')).toBe('true');
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ name: 'Control' });
  });

  it('asks for the study name before deleting the study', async () => {
    const calls = mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/3', () => ({ body: makeStudy() })), on('DELETE', '/studies/3', () => ({ body: { ok: true } })));
    const { router } = renderRoutes(routes, '/studies/3');
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Delete study' }));
    const dialog = screen.getByRole('alertdialog', { name: 'Delete this study?' });
    await user.type(within(dialog).getByRole('textbox'), 'Puncta');
    await user.click(within(dialog).getByRole('button', { name: 'Delete study' }));
    expect(within(dialog).getByText('the name typed differs from the study name')).toBeTruthy();
    await user.type(within(dialog).getByRole('textbox'), ' sharing');
    await user.click(within(dialog).getByRole('button', { name: 'Delete study' }));
    await screen.findByText('studies list');
    expect(router.state.location.pathname).toBe('/studies');
    expect(calls.find((c) => c.method === 'DELETE')?.body).toEqual({ confirmName: 'Puncta sharing' });
  });

  it('shows no editing controls to a read-only member', async () => {
    mockApi(asUser(demoUser(['collaborator'])), on('GET', '/studies/3', () => ({ body: makeStudy(['read']) })));
    renderRoutes(routes, '/studies/3');
    await screen.findByRole('heading', { level: 1, name: 'Puncta sharing' });
    expect(screen.queryByRole('button', { name: /Move|Delete|Rename|Add|Edit/ })).toBeNull();
  });

  it('shows a microscopist of the lab "Add coverslip" and "Add fields…", but no structure controls', async () => {
    mockApi(asUser(demoUser(['microscopist'])), on('GET', '/studies/3', () => ({ body: makeStudy(['read', 'add_coverslips', 'edit_images', 'run']) })));
    renderRoutes(routes, '/studies/3');
    await screen.findByRole('heading', { level: 1, name: 'Puncta sharing' });
    expect(screen.getAllByRole('button', { name: 'Add coverslip' }).length).toBe(2);
    expect((await screen.findAllByRole('button', { name: 'Add fields…' })).length).toBeGreaterThan(0);
    expect(screen.queryByRole('button', { name: /Move|Delete|Rename|Edit|Add condition/ })).toBeNull();
  });

  it('names the default instrument in the header: a plain name for members, a link to the instrument for facility managers', async () => {
    const study = { ...makeStudy(['read']), defaultInstrument: { id: 4, name: 'Stand B' } };
    mockApi(asUser(demoUser(['collaborator'])), on('GET', '/studies/3', () => ({ body: study })));
    const first = renderRoutes(routes, '/studies/3');
    const line = await waitFor(() => {
      const el = document.querySelector('[data-slot="study-instrument"]');
      if (!el) throw new Error('no instrument line yet');
      return el as HTMLElement;
    });
    expect(line.textContent).toBe('Recorded on Stand B by default');
    await waitFor(() => expect(first.qc.getQueryState(['auth', 'me'])?.status).toBe('success'));
    expect(within(line).queryByRole('link')).toBeNull();
    first.unmount();

    mockApi(asUser(demoUser(['facility_manager'])), on('GET', '/studies/3', () => ({ body: study })));
    renderRoutes(routes, '/studies/3');
    const link = await screen.findByRole('link', { name: 'Stand B' });
    expect(link.getAttribute('href')).toBe('/instruments/4');
    expect(link.closest('[data-slot="study-instrument"]')?.textContent).toBe('Recorded on Stand B by default');
  });

  it('says when the study has no default instrument, and shows the new one after the edit dialog saves it', async () => {
    const study = makeStudy();
    const stand = { id: 4, name: 'Stand B', objective: '63×', channel1: 'GFP', channel2: 'mCherry', createdAt: '2026-12-01T10:00:00.000Z', approved: null };
    const calls = mockApi(
      asUser(demoUser(['facility_manager'])),
      on('GET', '/studies/3', () => ({ body: study })),
      on('GET', '/instruments', () => ({ body: { instruments: [stand] } })),
      on('PATCH', '/studies/3', () => ({ body: { ...study, defaultInstrument: { id: 4, name: 'Stand B' } } })),
    );
    renderRoutes(routes, '/studies/3');
    expect(await screen.findByText('No default instrument: each upload chooses its own.')).toBeTruthy();
    const user = userEvent.setup();
    await user.click(screen.getByRole('button', { name: 'Edit study' }));
    const dialog = screen.getByRole('dialog', { name: 'Edit study' });
    const picker = within(dialog).getByLabelText('Instrument new uploads are recorded on') as HTMLSelectElement;
    await waitFor(() => expect(picker.disabled).toBe(false));
    await user.selectOptions(picker, '4');
    await user.click(within(dialog).getByRole('button', { name: 'Save' }));
    await waitFor(() => expect(screen.queryByRole('dialog')).toBeNull());
    expect(calls.find((c) => c.method === 'PATCH')?.body).toEqual({ name: 'Puncta sharing', description: 'Invented test study', defaultInstrumentId: 4 });
    expect((await screen.findByRole('link', { name: 'Stand B' })).getAttribute('href')).toBe('/instruments/4');
    expect(screen.queryByText('No default instrument: each upload chooses its own.')).toBeNull();
  });

  it('answers a study the user may not see with the not-found page', async () => {
    mockApi(asUser(demoUser(['collaborator'])), on('GET', '/studies/9', () => ({ status: 404, body: { error: 'no study with id 9' } })));
    renderRoutes(routes, '/studies/9');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
  });
});
