// @vitest-environment jsdom
/**
 * Measuring a calibration on its screen: a facility manager chooses a study and a bead field, the page asks the
 * server to measure (POST /calibrations/:id/measure-shift with that field), then shows where the shift came
 * from, the cross-correlation curves with the measured shift marked on each axis, and the bead field's
 * composite drawn in the pixel worker with channel 2 aligned by the version's shift, or as recorded when the
 * switch is off. Control fields for the bleed-through are sent with the label chosen. A study's default
 * instrument is chosen in the study's edit dialog. (our checks)
 */
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { fireEvent, screen, waitFor, within } from '@testing-library/react';
import { Component as Instrument } from '@/app/routes/Instrument';
import { renderComposite, type CompositeInput } from '@/features/workspace/lib/composite';
import type { ScatterRequest } from '@/features/workspace/lib/scatter.worker';
import { EditStudyDialog } from '@/features/studies/components/EditStudyDialog';
import { encodePixels } from '@shared/pixels/codec';
import type { CalibrationDetail, InstrumentDetail } from '@shared/schemas/instruments';
import type { StudyDetail, StudySummary } from '@shared/schemas/studies';
import type { FieldSummary } from '@shared/schemas/fields';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { render } from '@testing-library/react';

const draft: CalibrationDetail = {
  id: 11, instrumentId: 3, version: 2, status: 'draft', dx: null, dy: null, a21: null, a12: null, note: '',
  proposer: { id: 7, name: 'Ada Demo' }, reviewer: null, reviewNote: null, submittedAt: null, reviewedAt: null,
  createdAt: '2026-12-03T10:00:00.000Z', sources: { shift: null, a21: null, a12: null }, history: [], allowed: ['edit', 'submit', 'approve', 'return', 'retire'],
};
const { history: _h, allowed: _a, sources: _s, ...summary } = draft;
const instrument: InstrumentDetail = { id: 3, name: 'Stand A', objective: '63×', channel1: 'GFP', channel2: 'mCherry', createdAt: '2026-12-01T10:00:00.000Z', approved: null, calibrations: [summary] };
const study: StudySummary = {
  id: 2, name: 'Bead slides', description: '', labId: 1, labName: 'Lab A', ownerId: 7, ownerName: 'Ada Demo', isDemo: false, createdAt: '2026-12-01T10:00:00.000Z',
  conditionCount: 1, coverslipCount: 1, fieldCount: 2, defaultInstrument: null, permissions: ['read'],
};
const facts = { min: 0, max: 1000, mean: 100, saturatedFraction: 0, plateauFraction: null };
const field = (id: number, name: string): FieldSummary & { conditionId: number } => ({
  id, coverslipId: 4, conditionId: 3, name, width: 24, height: 16, sizeZ: 1, bitDepth: 16, sampleFormat: 'uint', channelNames: [null, null], pixelSizeUm: null,
  instrumentId: null, zStepUm: null, facts: { ch1: facts, ch2: facts }, saturated: false, status: 'ready', fileSize: 1000, createdAt: '2026-12-01T10:00:00.000Z',
});
const shifts = [-3, -2, -1, 0, 1, 2, 3];
const measured: CalibrationDetail = {
  ...draft,
  dx: 1.24,
  dy: -2.1,
  sources: {
    shift: {
      field: { id: 5, name: 'beads 1', studyId: 2 }, dx: 1.24, dy: -2.1, peak: 0.91, z: 'single plane',
      curves: { through: { dx: 1, dy: -2 }, shifts, x: [0.1, 0.2, 0.5, 0.8, 0.95, 0.7, 0.3], y: [0.3, 0.92, 0.6, 0.4, 0.2, 0.1, null] },
      measuredAt: '2026-12-03T10:05:00.000Z', measuredBy: { id: 7, name: 'Ada Demo' },
    },
    a21: null,
    a12: null,
  },
};

/** The pixel worker, in process: the same composite code the real worker runs. */
class FakeWorker {
  static sent: ScatterRequest[] = [];
  onmessage: ((e: { data: unknown }) => void) | null = null;
  onerror: ((e: unknown) => void) | null = null;
  private img: CompositeInput | null = null;
  postMessage(m: ScatterRequest) {
    FakeWorker.sent.push(m);
    if (m.type === 'pixels') this.img = m;
    if (m.type === 'composite') {
      const c = renderComposite(this.img!, m.shift, m.ranges);
      queueMicrotask(() => this.onmessage?.({ data: { type: 'composite', seq: m.seq, slot: m.slot, shift: m.shift, ...c, ms: 0 } }));
    }
  }
  terminate() {}
}

beforeEach(() => {
  FakeWorker.sent = [];
});
afterEach(() => {
  vi.unstubAllGlobals();
  vi.restoreAllMocks();
});

function withPixels() {
  const json = globalThis.fetch;
  const ch1 = Uint16Array.from({ length: 24 * 16 }, (_, i) => (i * 37) % 1000);
  const ch2 = Uint16Array.from({ length: 24 * 16 }, (_, i) => (i * 53) % 1000);
  const body = encodePixels({ width: 24, height: 16, depth: 1, bitDepth: 16, sampleType: 'uint16', ch1, ch2 });
  vi.stubGlobal('fetch', (input: RequestInfo | URL, init?: RequestInit) =>
    String(input).includes('/api/fields/5/pixels') ? Promise.resolve(new Response(body.slice().buffer as ArrayBuffer, { status: 200, headers: { 'content-type': 'application/x-syntopy-pixels', 'x-syntopy-z': 'single plane' } })) : json(input, init),
  );
  vi.stubGlobal('Worker', FakeWorker);
  // jsdom draws nothing: the picture is checked on the worker's bytes (tests/workspace/composite.test.ts)
  vi.spyOn(HTMLCanvasElement.prototype, 'getContext').mockReturnValue(null);
}

describe('measuring a calibration from stored fields', () => {
  it('measures the shift on the chosen bead field and shows the curves, the marks and the composite with alignment on and off', async () => {
    let current = draft;
    const calls = mockApi(
      asUser(demoUser(['facility_manager'])),
      on('GET', '/instruments/3', () => ({ body: instrument })),
      on('GET', '/calibrations/11', () => ({ body: current })),
      on('GET', '/studies', () => ({ body: { studies: [study] } })),
      on('GET', '/studies/2/fields', () => ({ body: { fields: [field(5, 'beads 1'), field(6, 'GFP only')] } })),
      on('POST', '/calibrations/11/measure-shift', () => ((current = measured), { body: measured })),
      on('POST', '/calibrations/11/measure-bleed', () => ({ body: current })),
    );
    withPixels();
    renderRoutes([{ path: '/instruments/:instrumentId', Component: Instrument }], '/instruments/3');
    expect(await screen.findByText(/Nothing in this version was measured in the app yet/)).toBeTruthy();
    const studyBox = await screen.findByLabelText('Study holding the fields');
    await waitFor(() => expect(within(studyBox).getAllByRole('option')).toHaveLength(2));
    fireEvent.change(studyBox, { target: { value: '2' } });
    const bead = await screen.findByLabelText('Bead field');
    fireEvent.change(bead, { target: { value: '5' } });
    fireEvent.click(screen.getByRole('button', { name: 'Measure shift' }));
    await waitFor(() => expect(calls.find((c) => c.method === 'POST' && c.path === '/calibrations/11/measure-shift')?.body).toEqual({ fieldId: 5 }));

    expect((await screen.findByTestId('source-shift')).textContent).toMatch(/^Shift \(1\.24, -2\.10\) px measured on the bead field beads 1 \(single plane; correlation peak 0\.910\)/);
    // the values filled the boxes, still editable
    expect((screen.getByLabelText('Channel shift, x (px)') as HTMLInputElement).value).toBe('1.24');
    expect((screen.getByLabelText('Channel shift, x (px)') as HTMLInputElement).disabled).toBe(false);
    // each curve marks the measured shift, drawn through the other axis's whole-pixel shift
    expect(screen.getByTestId('curve-x').getAttribute('aria-label')).toBe('r against the shift of channel 2 along x, from -3 to 3 px, with y held at -2 px; measured shift 1.24 px');
    expect(screen.getByTestId('curve-y').getAttribute('aria-label')).toContain('with x held at 1 px; measured shift -2.10 px');
    expect(screen.getByTestId('curve-x-mark')).toBeTruthy();
    expect(screen.getByTestId('curve-y-mark')).toBeTruthy();
    // a null r breaks the y curve into runs; the table gives every value
    expect(screen.getByTestId('curve-y').querySelectorAll('polyline')).toHaveLength(1);
    expect(screen.getAllByRole('row')).toHaveLength(shifts.length + 1);

    // the composite: drawn aligned by the version's shift, then as recorded
    await waitFor(() => expect(screen.getByTestId('alignment-composite-state').textContent).toMatch(/^Showing channel 2 aligned by \(1\.24, -2\.10\) px\./));
    expect(FakeWorker.sent.filter((m) => m.type === 'composite').at(-1)).toMatchObject({ shift: { dx: 1.24, dy: -2.1 } });
    fireEvent.click(screen.getByLabelText('Align channel 2'));
    await waitFor(() => expect(screen.getByTestId('alignment-composite-state').textContent).toMatch(/^Showing channel 2 as recorded\./));
    expect(FakeWorker.sent.filter((m) => m.type === 'composite').at(-1)).toMatchObject({ shift: null });

    // bleed-through: the controls and the label chosen are sent
    fireEvent.click(screen.getByLabelText('Labelled for mCherry only (gives a12)'));
    fireEvent.click(within(screen.getByRole('group', { name: 'Control fields' })).getByLabelText('GFP only'));
    fireEvent.click(screen.getByRole('button', { name: 'Measure bleed-through' }));
    await waitFor(() => expect(calls.find((c) => c.path === '/calibrations/11/measure-bleed')?.body).toEqual({ label: 2, fieldIds: [6] }));
  });

  it('asks to save typed changes before measuring', async () => {
    mockApi(
      asUser(demoUser(['facility_manager'])),
      on('GET', '/instruments/3', () => ({ body: instrument })),
      on('GET', '/calibrations/11', () => ({ body: draft })),
      on('GET', '/studies', () => ({ body: { studies: [study] } })),
      on('GET', '/studies/2/fields', () => ({ body: { fields: [field(5, 'beads 1')] } })),
    );
    renderRoutes([{ path: '/instruments/:instrumentId', Component: Instrument }], '/instruments/3');
    fireEvent.change(await screen.findByLabelText('Channel shift, x (px)'), { target: { value: '0.5' } });
    expect(await screen.findByText(/Save or undo your changes above first/)).toBeTruthy();
    fireEvent.change(screen.getByLabelText('Study holding the fields'), { target: { value: '2' } });
    fireEvent.change(await screen.findByLabelText('Bead field'), { target: { value: '5' } });
    expect((screen.getByRole('button', { name: 'Measure shift' }) as HTMLButtonElement).disabled).toBe(true);
  });
});

describe("a study's default instrument", () => {
  it('is chosen in the edit dialog and sent with the study', async () => {
    const calls = mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/instruments', () => ({ body: { instruments: [{ ...instrument, calibrations: undefined }] } })),
      on('PATCH', '/studies/2', (c) => ({ body: { ...detail, defaultInstrument: { id: 3, name: 'Stand A' }, ...(c.body as object) } })),
    );
    const detail: StudyDetail = { ...study, permissions: ['read', 'edit_structure'], conditions: [] };
    const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
    render(
      <QueryClientProvider client={qc}>
        <EditStudyDialog open onClose={() => {}} study={detail} />
      </QueryClientProvider>,
    );
    const picker = await screen.findByLabelText('Instrument new uploads are recorded on');
    await waitFor(() => expect(within(picker).getAllByRole('option')).toHaveLength(2));
    fireEvent.change(picker, { target: { value: '3' } });
    fireEvent.click(screen.getByRole('button', { name: 'Save' }));
    await waitFor(() => expect(calls.find((c) => c.method === 'PATCH')?.body).toEqual({ name: 'Bead slides', description: '', defaultInstrumentId: 3 }));
  });
});
