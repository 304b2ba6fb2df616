// @vitest-environment jsdom
/**
 * The workspace's orthogonal views on a stack (issue 16): each view fetches only its section
 * (`pixels?section=xz|yz&at=`), never the whole stack; captions name the row / column; every cell on the plane
 * has its outline (a 3-D label cell only on its own slices); depth is to scale when the voxel size is known,
 * and the note says so either way; clicking a view moves the point along it and shows the clicked slice; a
 * typed position outside the field is refused with the text quoted. Also the header's z step editor: it
 * refuses a bad value quoting it and sends a good one to PUT /fields/:id/z-step.
 */
import { describe, expect, it, vi } from 'vitest';
import { fireEvent, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { OrthoViews } from '@/features/workspace/components/OrthoViews';
import { ZStepEditor } from '@/features/fields/components/PixelSizeEditor';
import { initialOutlineState } from '@/features/workspace/lib/outlineState';
import { encodePixels } from '@shared/pixels/codec';
import { encodeRuns } from '@shared/analysis/rle';
import type { FieldDetail } from '@shared/schemas/fields';
import type { Cell } from '@shared/schemas/cells';
import './utils';

const W = 20, H = 16, Z = 5;
const field = (over: Partial<FieldDetail> = {}): FieldDetail => ({
  id: 4, coverslipId: 1, name: 'stack', width: W, height: H, sizeZ: Z, bitDepth: 16, sampleFormat: 'uint', channelNames: ['GFP', 'RFP'],
  pixelSizeUm: 0.1, instrumentId: null, instrumentName: null, zStepUm: 0.3,
  facts: { ch1: { min: 0, max: 900, mean: 100, saturatedFraction: 0, plateauFraction: null }, ch2: { min: 0, max: 900, mean: 100, saturatedFraction: 0, plateauFraction: null } },
  saturated: false, status: 'ready', fileSize: 1, createdAt: '2026-12-03T00:00:00Z', studyId: 3, conditionId: 10,
  files: [{ sha256: 'a', originalName: 's.tif', size: 1, channel: 1 }, { sha256: 'a', originalName: 's.tif', size: 1, channel: 2 }], uploadedBy: null, canEdit: true,
  ...over,
});
const base = { fieldId: 4, role: 'cell' as const, source: 'drawn' as const, origin: { how: 'drawn' as const }, excluded: false, exclusionReason: null, createdAt: '2026-12-03T00:00:00Z' };
const cells: Cell[] = [
  { ...base, id: 1, name: 'Box', geometry: { kind: 'rect', x: 2, y: 2, width: 6, height: 6, z: [2, 3] }, pixelCount: 36, zRange: [2, 3], voxelCount: 72 },
  { ...base, id: 2, name: 'Blob', source: 'label_image', origin: { how: 'imported', file: 'l.tif', label: 3, edited: false }, geometry: { kind: 'label3d', label: 3, z: [4, 5], slices: [encodeRuns(Uint32Array.from([5 * W + 12, 5 * W + 13]), W * H), []] }, pixelCount: 2, zRange: [4, 5], voxelCount: 2 },
];

function stubPixels() {
  const urls: string[] = [];
  vi.stubGlobal('fetch', vi.fn(async (input: RequestInfo | URL) => {
    const url = String(input);
    urls.push(url);
    const axis = /section=(xz|yz)/.exec(url)?.[1];
    const across = axis === 'xz' ? W : H;
    const ch = Uint16Array.from({ length: across * Z }, (_, i) => i);
    return new Response(encodePixels({ width: across, height: Z, depth: 1, bitDepth: 16, sampleType: 'uint16', ch1: ch, ch2: ch }) as Uint8Array<ArrayBuffer>, { status: 200, headers: { 'content-type': 'application/vnd.syntopy.pixels' } });
  }));
  return urls;
}

function renderViews(f: FieldDetail, point: [number, number], props: Partial<Parameters<typeof OrthoViews>[0]> = {}) {
  const st = initialOutlineState(cells);
  const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  const onPoint = vi.fn(), onSlice = vi.fn();
  render(
    <QueryClientProvider client={qc}>
      <OrthoViews field={f} display={{ view: 'composite', z: 2, range1: null, range2: null }} ranges={[null, null]} point={point} onPoint={onPoint} follow={false} onFollow={() => {}} outlines={st.outlines} selected={null} onSlice={onSlice} {...props} />
    </QueryClientProvider>,
  );
  return { onPoint, onSlice };
}

describe('OrthoViews', () => {
  it('fetches only the two sections through the point and outlines the cells on each plane', async () => {
    const urls = stubPixels();
    renderViews(field(), [12, 5]);
    await waitFor(() => expect(urls.sort()).toEqual(['/api/fields/4/pixels?section=xz&at=5', '/api/fields/4/pixels?section=yz&at=12']));
    const xz = screen.getByTestId('ortho-xz'), yz = screen.getByTestId('ortho-yz');
    expect(within(xz).getByText('XZ plane through row y = 5')).toBeTruthy();
    expect(within(yz).getByText('YZ plane through column x = 12')).toBeTruthy();
    // row 5 crosses the box (x 2–7) and the blob (x 12–13 on slice 4); column 12 only the blob
    expect([...xz.querySelectorAll('[data-outline]')].map((p) => p.getAttribute('data-outline'))).toEqual(['c1', 'c2']);
    expect([...yz.querySelectorAll('[data-outline]')].map((p) => p.getAttribute('data-outline'))).toEqual(['c2']);
    // the blob's outline spans its one slice (row 3 of the section), 2 pixels wide
    expect(xz.querySelector('[data-outline="c2"]')!.getAttribute('d')).toBe('M12 3L14 3L14 4L12 4Z');
    expect(screen.getByTestId('ortho-scale').textContent).toBe('Depth to scale: 0.3 µm between slices over 0.1 µm per pixel, so each slice is drawn 3.0 pixels tall.');
  });

  it('says when depth cannot be drawn to scale', () => {
    stubPixels();
    renderViews(field({ zStepUm: null }), [1, 1]);
    expect(screen.getByTestId('ortho-scale').textContent).toMatch(/^Depth is drawn one pixel per slice: the voxel size is not known/);
  });

  it('a click on a view moves the point along it and shows the slice clicked; a typed position outside the field is refused', async () => {
    stubPixels();
    const { onPoint, onSlice } = renderViews(field(), [12, 5]);
    const box = screen.getByTestId('ortho-xz').querySelector('.cursor-crosshair') as HTMLElement;
    box.getBoundingClientRect = () => ({ left: 0, top: 0, width: 200, height: 150, right: 200, bottom: 150, x: 0, y: 0, toJSON: () => ({}) });
    // x = ⌊55 / 200 · 20⌋ = 5, slice ⌊100 / 150 · 5⌋ = 3
    fireEvent.click(box, { clientX: 55, clientY: 100 });
    expect(onPoint).toHaveBeenLastCalledWith([5, 5]);
    expect(onSlice).toHaveBeenLastCalledWith(3);
    fireEvent.change(screen.getByLabelText('Point x'), { target: { value: '20' } });
    expect(screen.getByRole('alert').textContent).toBe('point x must be between 0 and 19, got "20"');
    fireEvent.change(screen.getByLabelText('Point y'), { target: { value: '9' } });
    expect(onPoint).toHaveBeenLastCalledWith([12, 9]);
  });
});

describe('ZStepEditor', () => {
  it('refuses a bad z step quoting it, then sends a good one', async () => {
    const sent: unknown[] = [];
    vi.stubGlobal('fetch', vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
      sent.push({ url: String(input), method: init?.method, body: init?.body ? JSON.parse(String(init.body)) : undefined });
      const { files: _f, studyId: _s, conditionId: _c, uploadedBy: _u, canEdit: _e, ...summary } = field({ zStepUm: 0.5 });
      return new Response(JSON.stringify(summary), { status: 200, headers: { 'content-type': 'application/json' } });
    }));
    const qc = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
    render(
      <QueryClientProvider client={qc}>
        <ZStepEditor fieldId={4} zStepUm={null} canEdit />
      </QueryClientProvider>,
    );
    const user = userEvent.setup();
    expect(screen.getByTestId('z-step').textContent).toMatch(/^no z step/);
    await user.click(screen.getByRole('button', { name: 'Set z step' }));
    const group = screen.getByRole('group', { name: 'Z step' });
    await user.type(within(group).getByLabelText('µm between slices'), '-2');
    await user.click(within(group).getByRole('button', { name: 'Save' }));
    expect(within(group).getByRole('alert').textContent).toBe('the z step must be above 0 µm between slices, got -2');
    expect(sent).toEqual([]);
    await user.clear(within(group).getByLabelText('µm between slices'));
    await user.type(within(group).getByLabelText('µm between slices'), '0.5{Enter}');
    await waitFor(() => expect(sent).toEqual([{ url: '/api/fields/4/z-step', method: 'PUT', body: { zStepUm: 0.5 } }]));
  });
});
