// @vitest-environment jsdom
/**
 * A bead field uploaded straight from the calibration screen: after choosing a study, a facility manager who may
 * add fields to it picks one of its coverslips and uploads with the usual dialog; the field is sent to that
 * coverslip recorded on the calibration's instrument, the study's field list is read again and the new field
 * becomes the bead field, ready to measure. A study the person may only read says so instead. The multipart
 * transport (lib/sendFields, XMLHttpRequest) is replaced here; the upload route itself is tested in tests/api.
 * (our checks)
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { fireEvent, screen, waitFor, within } from '@testing-library/react';
import { Component as Instrument } from '@/app/routes/Instrument';
import type { CalibrationDetail, InstrumentDetail, InstrumentSummary } from '@shared/schemas/instruments';
import type { FieldSummary, UploadFieldPlan } from '@shared/schemas/fields';
import type { StudyDetail } from '@shared/schemas/studies';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';
import { makeStudy } from './fixtures';

const sent = vi.hoisted(() => [] as { coverslipId: number; names: string[]; plan: UploadFieldPlan[] }[]);
vi.mock('@/features/fields/lib/sendFields', () => ({
  sendFields: async (coverslipId: number, files: File[], plan: UploadFieldPlan[]) => {
    sent.push({ coverslipId, names: files.map((f) => f.name), plan });
    return { ok: true, error: null, results: plan.map((p, index) => ({ index, name: p.name ?? '', ok: true, field: beadField })) };
  },
}));

const draft: CalibrationDetail = {
  id: 11, instrumentId: 3, version: 2, status: 'draft', dx: null, dy: null, a21: null, a12: null, note: '',
  proposer: { id: 7, name: 'Ada Demo' }, reviewer: null, reviewNote: null, submittedAt: null, reviewedAt: null,
  createdAt: '2026-12-03T10:00:00.000Z', sources: { shift: null, a21: null, a12: null }, history: [], allowed: ['edit', 'submit', 'approve', 'return', 'retire'],
};
const { history: _h, allowed: _a, sources: _s, ...summary } = draft;
const standA: InstrumentSummary = { id: 3, name: 'Stand A', objective: '63×', channel1: 'GFP', channel2: 'mCherry', createdAt: '2026-12-01T10:00:00.000Z', approved: null };
const instrument: InstrumentDetail = { ...standA, calibrations: [summary] };
const facts = { min: 0, max: 1000, mean: 100, saturatedFraction: 0, plateauFraction: null };
const beadField: FieldSummary = {
  id: 42, coverslipId: 101, name: 'beads new', width: 24, height: 16, sizeZ: 1, bitDepth: 16, sampleFormat: 'uint', channelNames: [null, null], pixelSizeUm: null,
  instrumentId: 3, zStepUm: null, facts: { ch1: facts, ch2: facts }, saturated: false, status: 'ready', fileSize: 1000, createdAt: '2026-12-03T10:00:00.000Z',
};
const { conditions: _c, ...listed } = makeStudy();

function world(study: StudyDetail) {
  let fields: (FieldSummary & { conditionId: number })[] = [];
  const calls = mockApi(
    asUser(demoUser(['facility_manager'])),
    on('GET', '/instruments/3', () => ({ body: instrument })),
    on('GET', '/instruments', () => ({ body: { instruments: [standA] } })),
    on('GET', '/calibrations/11', () => ({ body: draft })),
    on('GET', '/studies', () => ({ body: { studies: [{ ...listed, permissions: study.permissions }] } })),
    on('GET', '/studies/3', () => ({ body: study })),
    on('GET', '/studies/3/fields', () => ({ body: { fields } })),
    on('POST', '/calibrations/11/measure-shift', () => ({ body: draft })),
  );
  return { calls, addField: () => (fields = [{ ...beadField, conditionId: 10 }]) };
}

async function chooseStudy() {
  renderRoutes([{ path: '/instruments/:instrumentId', Component: Instrument }], '/instruments/3');
  const studyBox = await screen.findByLabelText('Study holding the fields');
  await waitFor(() => expect(within(studyBox).getAllByRole('option')).toHaveLength(2));
  fireEvent.change(studyBox, { target: { value: '3' } });
}

afterEach(() => {
  vi.unstubAllGlobals();
  sent.length = 0;
});

describe('a bead field uploaded from the calibration screen', () => {
  it('goes to the chosen coverslip on this instrument, then is the bead field to measure', async () => {
    const w = world(makeStudy());
    await chooseStudy();
    expect(await screen.findByText('This study has no fields yet.')).toBeTruthy();
    // the study's coverslips, named with their condition; the second of Control chosen
    const slip = (await screen.findByLabelText('Coverslip for a new field')) as HTMLSelectElement;
    expect(within(slip).getAllByRole('option').map((o) => o.textContent)).toEqual(['Control · Coverslip 1', 'Control · Coverslip 2', 'Treated · Coverslip 1']);
    fireEvent.change(slip, { target: { value: '101' } });
    fireEvent.click(screen.getByRole('button', { name: 'Upload a bead or control field…' }));

    const dialog = await screen.findByRole('dialog', { name: 'Add fields to this coverslip' });
    // recorded on the calibration's instrument unless changed
    const picker = within(dialog).getByLabelText('Recorded on') as HTMLSelectElement;
    await waitFor(() => expect(picker.value).toBe('3'));
    const file = new File([new Uint8Array([0x49, 0x49, 42, 0])], 'beads new.tif', { type: 'image/tiff' });
    fireEvent.change(within(dialog).getByLabelText('Files'), { target: { files: [file] } });
    await within(dialog).findByText(/beads new\.tif/);
    w.addField();
    fireEvent.click(within(dialog).getByRole('button', { name: /^Upload/ }));
    await within(dialog).findByText(/1 of 1 field added\./);
    expect(sent).toEqual([{ coverslipId: 101, names: ['beads new.tif'], plan: [{ name: 'beads new', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, instrumentId: 3 }] }]);
    fireEvent.click(within(dialog).getByRole('button', { name: 'Done' }));

    // the list was read again and the new field is the bead field
    const bead = (await screen.findByLabelText('Bead field')) as HTMLSelectElement;
    await waitFor(() => expect(bead.value).toBe('42'));
    expect(w.calls.filter((c) => c.method === 'GET' && c.path === '/studies/3/fields').length).toBeGreaterThanOrEqual(2);
    fireEvent.click(screen.getByRole('button', { name: 'Measure shift' }));
    await waitFor(() => expect(w.calls.find((c) => c.method === 'POST' && c.path === '/calibrations/11/measure-shift')?.body).toEqual({ fieldId: 42 }));
  });

  it('offers no upload into a study the person may only read, and says why', async () => {
    world(makeStudy(['read']));
    await chooseStudy();
    expect(await screen.findByText('You may not add fields to Puncta sharing; to upload a new one here, choose a study you may add fields to.')).toBeTruthy();
    expect(screen.queryByRole('button', { name: 'Upload a bead or control field…' })).toBeNull();
    expect(screen.queryByLabelText('Coverslip for a new field')).toBeNull();
  });
});
