// @vitest-environment jsdom
/** Facility usage page: facility managers only; one row per lab and month; the CSV link and the month boxes carry the range. (our checks) */
import { describe, expect, it } from 'vitest';
import { screen, within } from '@testing-library/react';
import { Component as Usage } from '@/app/routes/Usage';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const body = {
  from: '2026-01',
  to: '2026-02',
  rows: [
    { labId: 1, lab: 'Lab A', month: '2026-01', studies: 1, fields: 2, storedBytes: 3 * 1024 * 1024, runs: 2, computeSeconds: 90, activeUsers: 2 },
    { labId: 1, lab: 'Lab A', month: '2026-02', studies: 0, fields: 0, storedBytes: 0, runs: 0, computeSeconds: 0, activeUsers: 0 },
  ],
};

describe('Facility usage', () => {
  it('shows each lab and month and offers the same rows as CSV', async () => {
    const calls = mockApi(asUser(demoUser(['facility_manager'])), on('GET', /^\/usage/, () => ({ body })));
    renderRoutes([{ path: '/usage', Component: Usage }], '/usage?from=2026-01&to=2026-02');
    const table = await screen.findByRole('table');
    const rows = within(table).getAllByRole('row').slice(1).map((r) => within(r).getAllByRole('cell').map((c) => c.textContent));
    expect(rows).toEqual([
      ['2026-01', 'Lab A', '1', '2', '3.0 MiB', '2', '1.5 min', '2'],
      ['2026-02', 'Lab A', '0', '0', '0 B', '0', '0.0 s', '0'],
    ]);
    expect(screen.getByText('Download CSV').getAttribute('href')).toBe('/api/usage.csv?from=2026-01&to=2026-02');
    expect(calls.find((c) => c.path.startsWith('/usage'))!.path).toBe('/usage?from=2026-01&to=2026-02');
  });

  it('is not a page for other roles', async () => {
    mockApi(asUser(demoUser(['biologist'])));
    renderRoutes([{ path: '/usage', Component: Usage }], '/usage');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
  });
});
