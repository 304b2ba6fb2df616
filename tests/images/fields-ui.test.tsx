// @vitest-environment jsdom
/**
 * Client: the upload dialog (pairs of single-channel files, progress bar from XMLHttpRequest upload
 * progress, one result per field) and the field list (thumbnail, facts, saturation flag, link). (common practice)
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { createMemoryRouter, RouterProvider } from 'react-router';
import { UploadFields } from '@/features/fields/components/UploadFields';
import { FieldList } from '@/features/fields/components/FieldList';
import type { FieldSummary } from '@shared/schemas/fields';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function renderWith(el: React.ReactElement) {
  const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  const router = createMemoryRouter([{ path: '/', element: el }], { initialEntries: ['/'] });
  return render(
    <QueryClientProvider client={qc}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
}

const field = (over: Partial<FieldSummary> = {}): FieldSummary => ({
  id: 11,
  coverslipId: 5,
  name: 'cell 1',
  width: 64,
  height: 48,
  sizeZ: 1,
  bitDepth: 16,
  sampleFormat: 'uint',
  channelNames: ['GFP', null],
  pixelSizeUm: 0.065,
  instrumentId: null,
  zStepUm: null,
  facts: {
    ch1: { min: 0, max: 65535, mean: 1000, saturatedFraction: 0.02, plateauFraction: 0.02 },
    ch2: { min: 3, max: 4000, mean: 500, saturatedFraction: 0, plateauFraction: null },
  },
  saturated: true,
  status: 'ready',
  fileSize: 12662,
  createdAt: '2026-12-01T00:00:00Z',
  ...over,
});

class FakeXHR {
  static last: FakeXHR | null = null;
  method = '';
  url = '';
  body: FormData | null = null;
  status = 0;
  responseText = '';
  responseType = '';
  withCredentials = false;
  upload: { onprogress: ((e: { lengthComputable: boolean; loaded: number; total: number }) => void) | null; onload: (() => void) | null } = { onprogress: null, onload: null };
  onload: (() => void) | null = null;
  onerror: (() => void) | null = null;
  onabort: (() => void) | null = null;
  open(m: string, u: string) {
    this.method = m;
    this.url = u;
  }
  send(b: FormData) {
    this.body = b;
    FakeXHR.last = this;
  }
  abort() {
    this.onabort?.();
  }
}

describe('UploadFields', () => {
  it('pairs two single-channel files, shows upload progress, then one result per field', async () => {
    vi.stubGlobal('XMLHttpRequest', FakeXHR);
    const user = userEvent.setup();
    renderWith(<UploadFields coverslipId={5} />);
    await user.click(screen.getByRole('button', { name: 'Add fields…' }));
    const dialog = screen.getByRole('dialog', { name: 'Add fields to this coverslip' });
    await user.click(within(dialog).getByLabelText('Each channel is its own file (pairs)'));
    const a = new File([new Uint8Array(10)], 'cs1_488.tif', { type: 'image/tiff' });
    const b = new File([new Uint8Array(20)], 'cs1_568.tif', { type: 'image/tiff' });
    await user.upload(within(dialog).getByLabelText(/Pick many single-channel files/), [b, a]);
    expect(within(dialog).getByText(/Channel 1 file: cs1_488.tif/)).toBeTruthy();
    expect(within(dialog).getByText(/Channel 2 file: cs1_568.tif/)).toBeTruthy();
    await user.click(within(dialog).getByRole('button', { name: /Upload/ }));
    const xhr = FakeXHR.last!;
    expect(xhr.method).toBe('POST');
    expect(xhr.url).toBe('/api/coverslips/5/fields');
    expect(JSON.parse(String(xhr.body!.get('plan')))).toEqual([{ name: 'cs1', ch1: { file: 0, channel: 1 }, ch2: { file: 1, channel: 1 }, instrumentId: null }]);
    expect((xhr.body!.getAll('files') as File[]).map((f) => f.name)).toEqual(['cs1_488.tif', 'cs1_568.tif']);
    xhr.upload.onprogress!({ lengthComputable: true, loaded: 15, total: 30 });
    await waitFor(() => expect(screen.getByRole('progressbar', { name: 'Upload progress' }).getAttribute('aria-valuenow')).toBe('50'));
    xhr.status = 207;
    xhr.responseText = JSON.stringify({
      results: [
        { index: 0, name: 'cs1', ok: true, field: field({ name: 'cs1' }) },
        { index: 1, name: 'other', ok: false, status: 422, error: 'channel 2 is 32×32 but channel 1 is 64×48; both channels of a field must have the same size' },
      ],
    });
    xhr.onload!();
    const results = await screen.findByRole('list', { name: 'Upload results' });
    expect(within(results).getByText(/64×48, 16-bit integer/)).toBeTruthy();
    expect(within(results).getByText(/channel 2 is 32×32 but channel 1 is 64×48/)).toBeTruthy();
    expect(screen.getByText('1 of 2 fields added.')).toBeTruthy();
  });

  it('refuses to send an incomplete pair', async () => {
    vi.stubGlobal('XMLHttpRequest', FakeXHR);
    FakeXHR.last = null;
    const user = userEvent.setup();
    renderWith(<UploadFields coverslipId={5} />);
    await user.click(screen.getByRole('button', { name: 'Add fields…' }));
    await user.click(screen.getByLabelText('Each channel is its own file (pairs)'));
    await user.upload(screen.getByLabelText(/Pick many single-channel files/), [new File([new Uint8Array(4)], 'a.tif')]);
    await user.click(screen.getByRole('button', { name: /Upload/ }));
    expect(screen.getByRole('alert').textContent).toMatch(/pair 1 needs both a channel 1 and a channel 2 file/);
    expect(FakeXHR.last).toBeNull();
  });
});

describe('FieldList', () => {
  it('shows thumbnail, facts, saturation and links to the field page', async () => {
    vi.stubGlobal(
      'fetch',
      vi.fn(async (url: string) => {
        expect(url).toBe('/api/coverslips/5/fields');
        return new Response(JSON.stringify({ fields: [field()] }), { status: 200, headers: { 'content-type': 'application/json' } });
      }),
    );
    renderWith(<FieldList coverslipId={5} studyId={3} canEdit />);
    const link = await screen.findByRole('link', { name: 'cell 1' });
    expect(link.getAttribute('href')).toBe('/studies/3/fields/11');
    const img = screen.getByRole('img', { name: /Preview of cell 1: GFP in green, channel 2 in magenta/ });
    expect(img.getAttribute('src')).toBe('/api/fields/11/preview.png?max=192');
    expect(screen.getByText('saturated pixels')).toBeTruthy();
    expect(screen.getByText(/channel 1: 2\.0 % at the largest possible value/)).toBeTruthy();
    expect(screen.getByText((_, el) => el?.tagName === 'P' && /64×48 · 16-bit integer · 0\.065 µm\/pixel/.test(el.textContent ?? ''))).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Delete cell 1' })).toBeTruthy();
  });
});
