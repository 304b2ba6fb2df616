// @vitest-environment jsdom
/**
 * The remaining numeric boxes refuse text and values outside the allowed range with a message tied to the box
 * (aria-invalid, aria-describedby) and keep the last valid value: the workspace shown intensities (the channel's
 * data range from the field facts), the recipe pixel size (the shared BlockSizeSetting bound), the Compare
 * bootstrap seed (the CompareQuery bound), the find-cells boxes, the share lifetime, and the cell-table range.
 */
import { useState } from 'react';
import { describe, expect, it, vi } from 'vitest';
import { screen, render, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { z } from 'zod';
import { NumberText, NumberTextFor, readNumberText } from '@shared/schemas/common';
import { CompareQuery } from '@shared/schemas/compare';
import { BlockSizeSetting, DEFAULT_RECIPE_SETTINGS, RecipeSettings } from '@shared/schemas/recipes';
import { CreateShareRequest } from '@shared/schemas/shares';
import { RangeControl } from '@/features/workspace/components/DisplayPanel';
import { SettingsEditor } from '@/features/recipes/components/SettingsEditor';
import { AutoOutlineDialog } from '@/features/workspace/components/OutlineActions';
import { ShareDialog } from '@/features/shares/components/ShareDialog';
import { CellTableView } from '@/features/cell-table/components/CellTableView';
import { SeedBox } from '@/app/routes/Compare';
import { CoverslipDialog } from '@/features/studies/components/CoverslipDialog';
import { UploadFields } from '@/features/fields/components/UploadFields';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { mockApi, on, renderRoutes } from './utils';
import { makeStudy } from './fixtures';

/** the message an input points at through aria-describedby, or null */
const messageOf = (box: HTMLElement) => {
  const id = box.getAttribute('aria-describedby');
  return id ? (document.getElementById(id)?.textContent ?? null) : null;
};

const withQueries = (ui: React.ReactNode) => (
  <QueryClientProvider client={new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } })}>{ui}</QueryClientProvider>
);

describe('NumberText open ends and NumberTextFor (shared)', () => {
  it('an open end refuses the bound itself and says so', () => {
    const s = NumberText('Maximum', { min: 100, minExclusive: true, max: 4095 });
    expect(readNumberText(s, '100').error).toBe('Maximum must be greater than 100 and at most 4095, got "100"');
    expect(readNumberText(s, '100.5')).toEqual({ value: 100.5, error: null });
    expect(readNumberText(NumberText('Minimum', { min: 0, max: 10, maxExclusive: true }), '10').error).toBe('Minimum must be at least 0 and less than 10, got "10"');
    expect(readNumberText(NumberText('Minimum', { min: 0, max: 10, maxExclusive: true }), '0')).toEqual({ value: 0, error: null });
    expect(readNumberText(NumberText('Count', { integer: true }), '1e20').error).toBe('Count must be a whole number, got "1e20"');
  });

  it('reads the bounds of a shared zod schema, so the box refuses exactly what the request refuses', () => {
    const seedSchema = CompareQuery.shape.seed.unwrap();
    const seed = NumberTextFor('Seed', seedSchema);
    const positive = z.number().positive().max(100);
    const size = NumberTextFor('Size', positive);
    for (const text of ['-1', '0', '1', '2.5', '4294967295', '4294967296', '7e2']) {
      expect(readNumberText(seed, text).error === null).toBe(seedSchema.safeParse(Number(text)).success);
    }
    for (const text of ['0', '1e-9', '50', '100', '100.01']) {
      expect(readNumberText(size, text).error === null).toBe(positive.safeParse(Number(text)).success);
    }
    expect(readNumberText(size, '0').error).toBe('Size must be greater than 0 and at most 100, got "0"');
    expect(readNumberText(NumberTextFor('Days', CreateShareRequest.shape.expiresInDays.unwrap()), '366').error).toBe('Days must be between 1 and 365, got "366"');
  });
});

describe('workspace shown intensities', () => {
  function setup() {
    const onChange = vi.fn();
    render(<RangeControl label="GFP" tone="" top={4095} dataRange={[12, 3000]} value={[100, 2000]} auto={false} onChange={onChange} />);
    return { onChange, lo: screen.getByLabelText('GFP display minimum value'), hi: screen.getByLabelText('GFP display maximum value'), user: userEvent.setup() };
  }

  it('refuses text and bounds outside the channel data range with a message beside the box; the range is kept', async () => {
    const { onChange, lo, hi, user } = setup();
    await user.clear(lo);
    await user.type(lo, 'dim{Enter}');
    expect(messageOf(lo)).toBe('GFP minimum must be a number at least 12 and less than 3000, got "dim"');
    expect(lo.getAttribute('aria-invalid')).toBe('true');
    expect(hi.getAttribute('aria-invalid')).toBe('false');

    await user.clear(lo);
    await user.type(lo, '5{Enter}');
    expect(messageOf(lo)).toBe('GFP minimum must be at least 12 and less than 3000, got "5"');

    await user.clear(lo);
    await user.type(lo, '150');
    await user.clear(hi);
    await user.type(hi, '3500{Enter}');
    expect(messageOf(hi)).toBe('GFP maximum must be greater than 150 and at most 3000, got "3500"');
    expect(lo.getAttribute('aria-invalid')).toBe('false');

    await user.clear(hi);
    await user.type(hi, '150{Enter}');
    expect(messageOf(hi)).toBe('GFP maximum must be greater than 150 and at most 3000, got "150"');
    // leaving the minimum box at 150 applied (150, 2000); no refused entry reached the picture
    expect(onChange.mock.calls).toEqual([[[150, 2000]]]);
    expect((hi as HTMLInputElement).value).toBe('150');

    await user.clear(hi);
    await user.type(hi, '2999.5{Enter}');
    expect(screen.queryByRole('alert')).toBeNull();
    expect(hi.getAttribute('aria-invalid')).toBe('false');
    expect(onChange.mock.calls).toEqual([[[150, 2000]], [[150, 2999.5]]]);
  });

  it('a minimum typed above the shown maximum is refused rather than making an empty range', async () => {
    const { onChange, lo, hi, user } = setup();
    await user.clear(lo);
    await user.type(lo, '2500');
    await user.tab();
    expect(messageOf(hi)).toBe('GFP maximum must be greater than 2500 and at most 3000, got "2000"');
    expect(onChange).not.toHaveBeenCalled();
  });

  it('the sliders span the data range, not 0 to the maximum', () => {
    setup();
    const slider = screen.getByLabelText('GFP display minimum');
    expect([slider.getAttribute('min'), slider.getAttribute('max')]).toEqual(['12', '3000']);
  });
});

describe('recipe pixel size', () => {
  function Harness({ seen }: { seen: (s: RecipeSettings) => void }) {
    const [s, setS] = useState<RecipeSettings>({
      ...DEFAULT_RECIPE_SETTINGS,
      randomization: { enabled: true, count: 200, blockSize: { kind: 'psf', psfWidthUm: 0.25, pixelSizeUm: 0.1 } },
    });
    return <SettingsEditor value={s} onChange={(n) => (seen(n), setS(n))} />;
  }
  const pixelSize = (s: RecipeSettings) => (s.randomization.blockSize.kind === 'psf' ? s.randomization.blockSize.pixelSizeUm : 'not psf');

  it('refuses text, 0 and sizes beyond the schema bound with a message, keeping the last valid size; empty means each field', async () => {
    const seen = vi.fn();
    render(<Harness seen={seen} />);
    const user = userEvent.setup();
    const box = screen.getByLabelText('Pixel size (µm, empty: from each field)');

    await user.clear(box);
    await user.type(box, 'fine');
    expect(messageOf(box)).toBe('Pixel size must be a number greater than 0 and at most 100, got "fine"');
    expect(box.getAttribute('aria-invalid')).toBe('true');
    expect((box as HTMLInputElement).value).toBe('fine');
    await user.clear(box);
    await user.type(box, '0');
    expect(messageOf(box)).toBe('Pixel size must be greater than 0 and at most 100, got "0"');
    await user.clear(box);
    await user.type(box, '150');
    expect(messageOf(box)).toBe('Pixel size must be greater than 0 and at most 100, got "150"');
    // clearing the box chose "from each field" (null); typing "150" passed 1 and 15 on the way; no refused text
    // ("fine", "0", "150") ever reached the recipe
    expect(seen.mock.calls.map(([s]) => pixelSize(s))).toEqual([null, null, null, 1, 15]);
    for (const [s] of seen.mock.calls) expect(RecipeSettings.safeParse(s).success).toBe(true);

    await user.clear(box);
    await user.type(box, '0.065');
    expect(messageOf(box)).toBeNull();
    expect(box.getAttribute('aria-invalid')).toBe('false');
    expect(pixelSize(seen.mock.calls.at(-1)![0])).toBe(0.065);
    expect((box as HTMLInputElement).value).toBe('0.065');
  });

  it('the PSF width refuses 0, which the schema refuses', async () => {
    render(<Harness seen={() => {}} />);
    const user = userEvent.setup();
    const box = screen.getByLabelText('PSF width (µm)');
    await user.clear(box);
    await user.type(box, '0');
    expect(messageOf(box)).toBe('PSF width (µm) must be greater than 0 and at most 100, got "0"');
    expect(BlockSizeSetting.safeParse({ kind: 'psf', psfWidthUm: 0, pixelSizeUm: null }).success).toBe(false);
  });
});

describe('Compare bootstrap seed', () => {
  it('refuses text, fractions and seeds beyond the query bound; a valid seed is passed on', async () => {
    const onChange = vi.fn();
    render(<SeedBox value="1" onChange={onChange} />);
    const user = userEvent.setup();
    const box = screen.getByLabelText('Bootstrap seed');

    await user.clear(box);
    await user.type(box, 'lucky');
    expect(messageOf(box)).toBe('Bootstrap seed must be a number between 0 and 4294967295, got "lucky"');
    expect(box.getAttribute('aria-invalid')).toBe('true');
    await user.clear(box);
    await user.type(box, '2.5');
    expect(messageOf(box)).toBe('Bootstrap seed must be a whole number, got "2.5"');
    await user.clear(box);
    await user.type(box, '4294967296');
    expect(messageOf(box)).toBe('Bootstrap seed must be between 0 and 4294967295, got "4294967296"');
    // every value passed on is one the server's CompareQuery accepts
    for (const [v] of onChange.mock.calls) expect(CompareQuery.safeParse({ seed: v }).success).toBe(true);
    // "2" and "2." on the way to "2.5", then the prefixes of the refused seed
    expect(onChange.mock.calls.map(([v]) => v)).toEqual(['2', '2', '4', '42', '429', '4294', '42949', '429496', '4294967', '42949672', '429496729']);

    await user.clear(box);
    await user.type(box, '7');
    expect(messageOf(box)).toBeNull();
    expect(onChange.mock.calls.at(-1)).toEqual(['7']);
  });
});

describe('find cells', () => {
  const facts = {
    ch1: { min: 3, max: 4000, mean: 500, saturatedFraction: 0, plateauFraction: null },
    ch2: { min: 1, max: 900, mean: 80, saturatedFraction: 0, plateauFraction: null },
  };

  const answer = (kept: boolean) => ({ body: { cells: [], outlines: [{ points: [[1, 1], [9, 1], [9, 9], [1, 9]], pixels: 64 }, { points: [[20, 20], [30, 20], [30, 30]], pixels: 50 }], kept, level: 250, found: 3, droppedSmall: 1, droppedLarge: 0 } });

  it('checks the level against the chosen intensities and the sizes against the field, and sends nothing while refused', async () => {
    const calls = mockApi(on('POST', '/fields/5/cells/auto', (req) => answer(!(req.body as { preview?: boolean }).preview)));
    const onDone = vi.fn();
    render(withQueries(<AutoOutlineDialog fieldId={5} open onClose={() => {}} names={['GFP', 'RFP']} onDone={onDone} facts={facts} size={[64, 64]} pixelSizeUm={null} />));
    const user = userEvent.setup();
    expect(screen.getByTestId('find-cells-scale').textContent).toMatch(/no pixel size, so sizes are in pixels/);
    await user.selectOptions(screen.getByLabelText('Threshold'), 'manual');
    const level = screen.getByLabelText('Level (cells are brighter than this)');
    expect(messageOf(level)).toBeNull(); // nothing typed yet

    await user.click(screen.getByRole('button', { name: 'Preview' }));
    expect(messageOf(level)).toBe('Level must be a number between 4 and 4900, got ""'); // sum of both channels
    await user.type(level, '5000');
    expect(messageOf(level)).toBe('Level must be between 4 and 4900, got "5000"');
    await user.selectOptions(screen.getByLabelText('Intensities'), 'ch2');
    expect(messageOf(level)).toBe('Level must be between 1 and 900, got "5000"');
    await user.clear(level);
    await user.type(level, '250');
    expect(messageOf(level)).toBeNull();

    const smallest = screen.getByLabelText('Smallest cell (pixels)');
    const largest = screen.getByLabelText('Largest cell (pixels, empty = no limit)');
    const distance = screen.getByLabelText('Least distance between cell centres (pixels)');
    const smoothing = screen.getByLabelText('Smoothing before the threshold (pixels, 0 = none)');
    await user.clear(smallest);
    await user.type(smallest, '12.5');
    expect(messageOf(smallest)).toBe('Smallest cell must be a whole number, got "12.5"');
    await user.clear(smallest);
    await user.type(smallest, '40');
    await user.type(largest, '20');
    expect(messageOf(largest)).toBe('Largest cell must be between 40 and 4096, got "20"');
    await user.clear(largest);
    await user.type(largest, '5000');
    expect(messageOf(largest)).toBe('Largest cell must be between 40 and 4096, got "5000"');
    await user.clear(distance);
    await user.type(distance, 'far');
    expect(messageOf(distance)).toBe('Least distance must be a number between 1 and 500, got "far"');
    await user.click(screen.getByRole('button', { name: 'Preview' }));
    expect(calls.filter((c) => c.method === 'POST')).toEqual([]);
    expect((screen.getByRole('button', { name: 'Keep' }) as HTMLButtonElement).disabled).toBe(true);

    await user.clear(largest);
    await user.type(largest, '900');
    await user.clear(distance);
    await user.type(distance, '7.5');
    await user.clear(smoothing);
    await user.type(smoothing, '0');
    await user.click(screen.getByRole('button', { name: 'Preview' }));
    // the preview stores nothing and shows what was found
    expect(await screen.findByText(/2 cells of 50 to 64 pixels \(median 57 pixels\); 1 smaller and 0 larger objects left out/)).toBeTruthy();
    expect(screen.getByTestId('find-cells-preview-image').querySelectorAll('polygon').length).toBe(2);
    expect(onDone).not.toHaveBeenCalled();
    const body = { channel: 'ch2', threshold: { method: 'manual', level: 250 }, smoothing: 0, fillHoles: true, split: true, seedDistance: 7.5, minPixels: 40, maxPixels: 900, replace: true };
    expect(calls.filter((c) => c.method === 'POST').map((c) => c.body)).toEqual([{ ...body, preview: true }]);
    await user.click(screen.getByRole('button', { name: 'Keep 2 outlines' }));
    await waitFor(() => expect(onDone).toHaveBeenCalled());
    expect(calls.filter((c) => c.method === 'POST').at(-1)!.body).toEqual(body);
  });

  it('with a pixel size: sizes in µm² and µm with defaults for cells at that scale, converted to pixels for the request', async () => {
    const calls = mockApi(on('POST', '/fields/5/cells/auto', () => answer(false)));
    render(withQueries(<AutoOutlineDialog fieldId={5} open onClose={() => {}} names={['GFP', 'RFP']} onDone={() => {}} facts={facts} size={[1024, 1024]} pixelSizeUm={0.065} />));
    const user = userEvent.setup();
    expect(screen.getByTestId('find-cells-scale').textContent).toContain('pixel size 0.065 µm');
    expect((screen.getByLabelText('Smallest cell (µm²)') as HTMLInputElement).value).toBe('40');
    expect((screen.getByLabelText('Largest cell (µm², empty = no limit)') as HTMLInputElement).value).toBe('4000');
    expect((screen.getByLabelText('Smoothing before the threshold (µm, 0 = none)') as HTMLInputElement).value).toBe('1');
    expect((screen.getByLabelText('Least distance between cell centres (µm)') as HTMLInputElement).value).toBe('8');
    await user.click(screen.getByRole('button', { name: 'Preview' }));
    await waitFor(() => expect(calls.filter((c) => c.method === 'POST')).toHaveLength(1));
    const sent = calls.find((c) => c.method === 'POST')!.body as Record<string, number>;
    // 40 µm² / (0.065 µm)² = 9,467.46 pixels → 9,467 (arithmetic)
    expect(sent.minPixels).toBe(Math.round(40 / 0.065 ** 2));
    expect(sent.maxPixels).toBe(Math.round(4000 / 0.065 ** 2));
    expect(sent.smoothing).toBeCloseTo(1 / 0.065, 12);
    expect(sent.seedDistance).toBeCloseTo(8 / 0.065, 12);
    expect(await screen.findByText(/2 cells of 0.211 to 0.27 µm²/)).toBeTruthy();
  });
});

describe('share link lifetime', () => {
  it('refuses text and days beyond the request bound beside the box and sends nothing', async () => {
    const calls = mockApi();
    render(withQueries(<ShareDialog reportId={9} open onClose={() => {}} />));
    const user = userEvent.setup();
    await user.type(screen.getByLabelText('E-mail addresses'), 'pi@lab.test');
    const days = screen.getByLabelText('Links work for (days)');
    await user.clear(days);
    await user.type(days, 'a month');
    expect(messageOf(days)).toBe('Links work for must be a number between 1 and 365, got "a month"');
    expect(days.getAttribute('aria-invalid')).toBe('true');
    await user.clear(days);
    await user.type(days, '400');
    expect(messageOf(days)).toBe('Links work for must be between 1 and 365, got "400"');
    await user.click(screen.getByRole('button', { name: 'Send links' }));
    expect(calls).toEqual([]);
  });
});

describe('cell table range filter', () => {
  it('refuses text and a "to" below "from" with a message tied to the box; a valid range goes to the URL as numbers', async () => {
    mockApi();
    const { router } = renderRoutes([{ path: '/studies/:studyId/cells', element: <CellTableView study={makeStudy()} /> }], '/studies/3/cells');
    const user = userEvent.setup();
    const from = await screen.findByLabelText('from');
    const to = screen.getByLabelText('to');
    const add = screen.getByRole('button', { name: 'Add range' });

    await user.type(from, 'high');
    await user.click(add);
    expect(messageOf(from)).toBe('from must be a number, got "high"');
    expect(from.getAttribute('aria-invalid')).toBe('true');
    expect(to.getAttribute('aria-invalid')).toBe('false');

    await user.clear(from);
    await user.type(from, '0.5');
    await user.type(to, '0.2');
    await user.click(add);
    expect(messageOf(to)).toBe('to must be at least 0.5, got "0.2"');
    expect(from.getAttribute('aria-invalid')).toBe('false');
    expect(to.getAttribute('aria-invalid')).toBe('true');
    expect(new URLSearchParams(router.state.location.search).getAll('range')).toEqual([]);

    await user.clear(from);
    await user.type(from, '+0.25');
    await user.clear(to);
    await user.type(to, '1e0');
    await user.click(add);
    expect(screen.queryByText(/must be/)).toBeNull();
    // sent as plain numbers, which the server's range filter reads ('+0.25' is not one of them)
    expect(new URLSearchParams(router.state.location.search).getAll('range')).toEqual(['pearson:0.25:1']);
  });
});

describe('coverslip replicate', () => {
  it('refuses text and 0 beside the box before anything is saved; a whole number is saved as a number', async () => {
    const save = vi.fn(async () => ({}));
    render(<CoverslipDialog open onClose={() => {}} conditionName="Control" save={save} />);
    const user = userEvent.setup();
    const box = screen.getByLabelText('Replicate');
    await user.type(box, 'two');
    await user.click(screen.getByRole('button', { name: 'Add coverslip' }));
    expect(messageOf(box)).toBe('Replicate must be a number greater than 0, got "two"');
    expect(box.getAttribute('aria-invalid')).toBe('true');
    await user.clear(box);
    await user.type(box, '0');
    await user.click(screen.getByRole('button', { name: 'Add coverslip' }));
    expect(messageOf(box)).toBe('Replicate must be greater than 0, got "0"');
    expect(save).not.toHaveBeenCalled();
    await user.clear(box);
    await user.type(box, '3');
    await user.click(screen.getByRole('button', { name: 'Add coverslip' }));
    await waitFor(() => expect(save).toHaveBeenCalledTimes(1));
    expect(save.mock.calls[0]).toEqual([{ replicate: 3, preparedOn: null, notes: '' }]);
  });
});

describe('upload channel typed by hand', () => {
  it('a file whose channels cannot be read here gets channel boxes that refuse text and 0 with a message', async () => {
    render(withQueries(<UploadFields coverslipId={100} />));
    const user = userEvent.setup();
    await user.click(screen.getByRole('button', { name: 'Add fields…' }));
    const input = (await screen.findByText('Files')).parentElement!.querySelector('input[type=file]') as HTMLInputElement;
    await user.upload(input, new File(['not a tiff'], 'odd.tif', { type: 'image/tiff' }));
    const box = await screen.findByLabelText(/^Channel 1/);
    await user.clear(box);
    await user.type(box, 'green');
    expect(messageOf(box)).toBe('Channel must be a number between 1 and 10000, got "green"');
    expect(box.getAttribute('aria-invalid')).toBe('true');
    expect((box as HTMLInputElement).value).toBe('green');
    await user.clear(box);
    await user.type(box, '0');
    expect(messageOf(box)).toBe('Channel must be between 1 and 10000, got "0"');
    await user.clear(box);
    await user.type(box, '3');
    expect(messageOf(box)).toBeNull();
    expect(box.getAttribute('aria-invalid')).toBe('false');
  });
});
