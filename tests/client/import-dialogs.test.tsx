// @vitest-environment jsdom
/** The workspace's file import dialogs: the file goes as multipart to its route, the notice counts what came in,
 * a refusal shows the server's message and the dialog stays open. (common practice) */
import { describe, expect, it, vi } from 'vitest';
import { render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import type { ReactNode } from 'react';
import { ImportLabelsDialog, ImportOutlinesDialog } from '@/features/workspace';
import './utils';

type Sent = { url: string; method: string; file: File | null };
function stubFetch(reply: { status: number; body: unknown }) {
  const sent: Sent[] = [];
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
      const fd = init?.body instanceof FormData ? init.body : null;
      sent.push({ url: String(input), method: init?.method ?? 'GET', file: (fd?.get('file') as File | null) ?? null });
      return new Response(JSON.stringify(reply.body), { status: reply.status, headers: { 'content-type': 'application/json' } });
    }),
  );
  return sent;
}
const wrap = (ui: ReactNode) => render(<QueryClientProvider client={new QueryClient({ defaultOptions: { mutations: { retry: false } } })}>{ui}</QueryClientProvider>);

describe('file import dialogs', () => {
  it('GeoJSON: posts the file (no replace by default) and reports the outlines imported', async () => {
    const sent = stubFetch({ status: 200, body: { cells: [], features: 2 } });
    const onDone = vi.fn(), onClose = vi.fn();
    wrap(<ImportOutlinesDialog fieldId={3} open onClose={onClose} onDone={onDone} />);
    const file = new File(['{"type":"FeatureCollection","features":[]}'], 'cells.geojson', { type: 'application/geo+json' });
    await userEvent.upload(screen.getByLabelText('GeoJSON file'), file);
    await userEvent.click(screen.getByRole('button', { name: 'Import' }));
    await vi.waitFor(() => expect(onDone).toHaveBeenCalledWith('2 outlines imported from cells.geojson'));
    expect(onClose).toHaveBeenCalled();
    expect(sent).toHaveLength(1);
    expect(sent[0].url).toBe('/api/fields/3/cells/geojson');
    expect(sent[0].method).toBe('POST');
    expect(sent[0].file?.name).toBe('cells.geojson');
  });

  it('label image: replaces earlier label cells by default; a refusal shows the message and keeps the dialog open', async () => {
    const sent = stubFetch({ status: 422, body: { error: 'the label image is 10 × 10 pixels but the field is 64 × 48' } });
    const onDone = vi.fn(), onClose = vi.fn();
    wrap(<ImportLabelsDialog fieldId={5} open size={[64, 48]} onClose={onClose} onDone={onDone} />);
    await userEvent.upload(screen.getByLabelText('Label image file'), new File([new Uint8Array(8)], 'labels.tif', { type: 'image/tiff' }));
    await userEvent.click(screen.getByRole('button', { name: 'Import' }));
    expect(await screen.findByText(/the label image is 10 × 10 pixels but the field is 64 × 48/)).toBeTruthy();
    expect(sent[0].url).toBe('/api/fields/5/cells/import?replace=1');
    expect(onDone).not.toHaveBeenCalled();
    expect(onClose).not.toHaveBeenCalled();
  });
});
