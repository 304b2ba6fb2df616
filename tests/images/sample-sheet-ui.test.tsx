// @vitest-environment jsdom
/**
 * The sample-sheet intake dialog: the sheet is checked first and every bad row is listed with its line; files
 * cannot be sent until the sheet is clean. The server's answer is the shared response schema, answered here
 * by a stand-in fetch (the route itself is covered by tests/intake/sample-sheet.test.ts). (common practice)
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { SampleSheetIntake } from '@/features/fields/components/SampleSheetIntake';
import { SampleSheetCheckResponse } from '@shared/schemas/sample-sheet';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

describe('SampleSheetIntake', () => {
  it('sends the sheet text to the check route and lists each bad row by line; sending stays disabled', async () => {
    const answer = SampleSheetCheckResponse.parse({
      ok: false,
      rows: [],
      problems: [{ line: 3, message: 'ch1 must be a channel number from 1, got "x"' }],
      creates: { conditions: [], coverslips: [] },
      alreadyStored: [],
      uploaded: [],
    });
    const calls: { url: string; body: unknown }[] = [];
    vi.stubGlobal('fetch', async (url: string, init: RequestInit) => {
      calls.push({ url, body: JSON.parse(String(init.body)) });
      return new Response(JSON.stringify(answer), { status: 200, headers: { 'content-type': 'application/json' } });
    });
    const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
    render(
      <QueryClientProvider client={qc}>
        <SampleSheetIntake studyId={7} />
      </QueryClientProvider>,
    );
    const user = userEvent.setup();
    await user.click(screen.getByRole('button', { name: 'Add by sample sheet' }));
    const csv = 'file,condition,coverslip,ch1\na.tif,control,CS1,1\nb.tif,control,CS1,x\n';
    await user.upload(screen.getByLabelText('Sample sheet (CSV)'), new File([csv], 'sheet.csv', { type: 'text/csv' }));
    await user.click(screen.getByRole('button', { name: 'Check sheet' }));
    expect(await screen.findByText(/Line 3: ch1 must be a channel number from 1, got "x"/)).toBeTruthy();
    expect(calls).toHaveLength(1);
    expect(calls[0].url).toMatch(/\/api\/studies\/7\/sample-sheet\/check$/);
    expect(calls[0].body).toEqual({ csv, files: [] });
    expect((screen.getByRole('button', { name: 'Send files' }) as HTMLButtonElement).disabled).toBe(true);
  });
});
