// @vitest-environment jsdom
/**
 * Instruments screens: the plain sentences follow the shift convention of the `analyze` contract (channel 2
 * displaced by (dx, dy): ch2(x + dx, y + dy) ≈ ch1(x, y); x right, y down); the value boxes refuse what the
 * shared schema refuses (a fraction of 1, a shift beyond ±100 px) and send an emptied box as null (not
 * measured); the pages are for facility managers only. (our checks)
 */
import { describe, expect, it } from 'vitest';
import { fireEvent, screen, waitFor } from '@testing-library/react';
import { Component as Instrument } from '@/app/routes/Instrument';
import { Component as Instruments } from '@/app/routes/Instruments';
import { bleedSentence, shiftSentence } from '@/features/instruments/lib/sentences';
import type { CalibrationDetail, InstrumentDetail } from '@shared/schemas/instruments';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const ch = { channel1: 'GFP', channel2: 'mCherry' };

describe('calibration sentences', () => {
  it('say which way channel 2 lies: +dx right, +dy down (the analyze contract)', () => {
    expect(shiftSentence({ dx: 2, dy: 3 }, ch)).toMatch(/^Against GFP, mCherry is shifted 2 px to the right and 3 px down;/);
    expect(shiftSentence({ dx: -0.5, dy: 0 }, ch)).toMatch(/^Against GFP, mCherry is shifted 0.5 px to the left;/);
    expect(shiftSentence({ dx: 0, dy: -1 }, ch)).toMatch(/^Against GFP, mCherry is shifted 1 px up;/);
    expect(shiftSentence({ dx: 0, dy: 0 }, ch)).toBe('mCherry lines up with GFP: no shift is applied.');
    expect(shiftSentence({ dx: null, dy: null }, ch)).toMatch(/^Channel shift not measured/);
  });
  it('name a21 as channel 1 seen in channel 2, a12 the other way, and a missing one as 0 (what runs unmix with)', () => {
    expect(bleedSentence({ a21: 0.125, a12: null }, ch)).toMatch(/^12.5 % of GFP appears in mCherry; bleed of mCherry into GFP not measured \(taken as 0\)\./);
    expect(bleedSentence({ a21: null, a12: null }, ch)).toMatch(/^Bleed-through not measured/);
  });
});

const draft: CalibrationDetail = {
  id: 11, instrumentId: 3, version: 1, status: 'draft', dx: 1, dy: 2, a21: 0.1, a12: null, note: '',
  proposer: { id: 7, name: 'Ada Demo' }, reviewer: null, reviewNote: null, submittedAt: null, reviewedAt: null,
  createdAt: '2026-12-02T10:00:00.000Z', sources: { shift: null, a21: null, a12: null }, history: [], allowed: ['edit', 'submit', 'approve', 'return', 'retire'],
};
const { history: _h, allowed: _a, sources: _s, ...summary } = draft;
const instrument: InstrumentDetail = { id: 3, name: 'Stand A', objective: '63×', channel1: 'GFP', channel2: 'mCherry', createdAt: '2026-12-01T10:00:00.000Z', approved: null, calibrations: [summary] };

describe('an instrument page', () => {
  it('refuses out-of-range values with the schema’s message and saves an emptied box as null', async () => {
    const calls = mockApi(
      asUser(demoUser(['facility_manager'])),
      on('GET', '/instruments/3', () => ({ body: instrument })),
      on('GET', '/calibrations/11', () => ({ body: draft })),
      on('PATCH', '/calibrations/11', (c) => ({ body: { ...draft, ...(c.body as object) } })),
      on('GET', '/studies', () => ({ body: { studies: [] } })),
    );
    renderRoutes([{ path: '/instruments/:instrumentId', Component: Instrument }], '/instruments/3');
    const a21 = (await screen.findByLabelText('Bleed-through a21')) as HTMLInputElement;
    expect(a21.value).toBe('0.1');
    fireEvent.change(a21, { target: { value: '1' } });
    expect(await screen.findByRole('alert')).toHaveProperty('textContent', 'Bleed-through a21 must be at least 0 and less than 1, got "1"');
    fireEvent.change(a21, { target: { value: '' } });
    fireEvent.change(screen.getByLabelText('Channel shift, x (px)'), { target: { value: '101' } });
    expect((await screen.findByRole('alert')).textContent).toContain('must be between -100 and 100, got "101"');
    fireEvent.change(screen.getByLabelText('Channel shift, x (px)'), { target: { value: '-1.5' } });
    fireEvent.click(screen.getByRole('button', { name: 'Save' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'PATCH')).toBe(true));
    expect(calls.find((c) => c.method === 'PATCH')!.body).toEqual({ dx: -1.5, dy: 2, a21: null, a12: null, note: '' });
  });

  it('an unknown instrument is a page that is not there', async () => {
    mockApi(asUser(demoUser(['facility_manager'])), on('GET', '/instruments/99', () => ({ status: 404, body: { error: 'no instrument with id 99' } })));
    renderRoutes([{ path: '/instruments/:instrumentId', Component: Instrument }], '/instruments/99');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
  });

  it('the Instruments pages are not for other roles', async () => {
    mockApi(asUser(demoUser(['microscopist'])));
    renderRoutes([{ path: '/instruments', Component: Instruments }], '/instruments');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
  });
});
