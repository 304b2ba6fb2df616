// @vitest-environment jsdom
/**
 * The Cells list says how each cell was made (issue 19 item 2): drawn, imported (file and label), found
 * automatically (settings in the tooltip, with µm when the pixel size was known), edited by hand; sizes also in
 * µm² when the field's pixel size is known. (common practice; the words come from shared/format/origin.ts)
 */
import { describe, expect, it } from 'vitest';
import { render, screen } from '@testing-library/react';
import { CellsPanel } from '@/features/workspace/components/CellsPanel';
import { initialOutlineState } from '@/features/workspace/lib/outlineState';
import type { Cell, CellOrigin } from '@shared/schemas/cells';

const cell = (id: number, origin: CellOrigin, pixelCount: number): Cell => ({
  id,
  fieldId: 1,
  name: `Cell ${id}`,
  role: 'cell',
  geometry: { kind: 'rect', x: 0, y: 0, width: 10, height: 10 },
  source: origin.how === 'found' ? 'automatic' : origin.how === 'imported' ? 'label_image' : 'drawn',
  origin,
  pixelCount,
  zRange: [1, 1],
  voxelCount: pixelCount,
  excluded: false,
  exclusionReason: null,
  createdAt: '2026-12-02T10:00:00.000Z',
});

describe('Cells list', () => {
  it('shows how each cell was made and its size in µm²', () => {
    const settings = { channel: 'sum' as const, method: 'otsu' as const, level: 812, smoothing: 15.38, z: null, fillHoles: true, split: true, seedDistance: 123.1, minPixels: 9467, maxPixels: null, pixelSizeUm: 0.065 };
    const cells = [
      cell(1, { how: 'drawn' }, 100),
      cell(2, { how: 'imported', file: 'nuclei.tif', label: 7, edited: false }, 200),
      cell(3, { how: 'found', settings, edited: false }, 9500),
      cell(4, { how: 'found', settings: null, edited: true }, 400),
    ];
    const st = initialOutlineState(cells);
    render(<CellsPanel outlines={st.outlines} saved={st.saved} selected={null} dispatch={() => {}} canEdit={false} unsaved={new Set()} pixelSizeUm={0.065} />);
    const lines = screen.getAllByTestId('cell-origin');
    expect(lines.map((l) => l.textContent)).toEqual([
      '100 px (0.422 µm²) · drawn · box', // 0.4225 is stored as 0.42249…, so it rounds down
      '200 px (0.845 µm²) · imported (nuclei.tif, label 7) · box',
      '9,500 px (40.1 µm²) · found automatically · box',
      '400 px (1.69 µm²) · found automatically, edited by hand · box',
    ]);
    expect(lines[2].getAttribute('title')).toBe(
      'found automatically: the sum of both channels, smoothed with a Gaussian of σ = 15.4 pixels (1 µm); thresholded at Otsu\'s level of the intensities clipped at their 99.5th percentile; holes filled; touching cells split by a distance-transform watershed with seeds at least 123 pixels (8 µm) apart; objects kept of at least 9,467 pixels (40 µm²); level 812 intensity units',
    );
    expect(lines[3].getAttribute('title')).toBe('found automatically, edited by hand (settings not recorded)');
  });
});
