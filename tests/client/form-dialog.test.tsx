// @vitest-environment jsdom
/**
 * FormDialog (src/components/Dialog.tsx), the dialog around one form used by "New report" and "Share by
 * e-mail": the footer's primary button submits the form it belongs to, Cancel closes without sending, and the
 * New report form checks the shared CreateReportRequest schema before anything is sent.
 */
import { describe, expect, it, vi } from 'vitest';
import { screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { CreateReportDialog } from '@/features/reports/components/CreateReportDialog';
import { mockApi, on, renderRoutes } from './utils';

describe('New report dialog', () => {
  it('refuses an empty title beside the box, then the footer button sends the form once', async () => {
    const calls = mockApi(on('POST', '/studies/3/reports', () => ({ status: 409, body: { error: 'the study has no measurements to freeze' } })));
    renderRoutes([{ path: '/', element: <CreateReportDialog studyId={3} open onClose={() => {}} recipeId={8} /> }], '/');
    const user = userEvent.setup();
    await user.click(screen.getByRole('button', { name: 'Freeze report' }));
    expect(await screen.findByText('enter a title')).toBeTruthy();
    expect(calls.filter((c) => c.method === 'POST')).toEqual([]);

    await user.type(screen.getByLabelText('Title'), 'Treated vs untreated');
    await user.click(screen.getByRole('button', { name: 'Freeze report' }));
    expect(await screen.findByText('the study has no measurements to freeze')).toBeTruthy();
    const posts = calls.filter((c) => c.method === 'POST');
    expect(posts).toEqual([
      { method: 'POST', path: '/studies/3/reports', body: { title: 'Treated vs untreated', notes: '', coefficients: ['pearson', 'spearman', 'mandersM1', 'mandersM2'], recipeId: 8 } },
    ]);
  });

  it('Cancel closes without sending', async () => {
    const calls = mockApi();
    const onClose = vi.fn();
    renderRoutes([{ path: '/', element: <CreateReportDialog studyId={3} open onClose={onClose} /> }], '/');
    const user = userEvent.setup();
    await user.type(screen.getByLabelText('Title'), 'Draft');
    await user.click(screen.getByRole('button', { name: 'Cancel' }));
    expect(onClose).toHaveBeenCalledTimes(1);
    expect(calls.filter((c) => c.method === 'POST')).toEqual([]);
  });
});
