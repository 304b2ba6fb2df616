// @vitest-environment jsdom
/**
 * The Spots panel's cell table: nearest-neighbour distances are stored in pixel widths (in 3D with z scaled
 * by the z step, shared/analysis/objects3d.ts), so with the field's pixel size known the panel also gives
 * them in µm (value × pixel size); counts and fractions get no unit, and without a pixel size nothing is added.
 */
import { describe, expect, it } from 'vitest';
import { render, screen } from '@testing-library/react';
import { SpotsPanel } from '@/features/workspace/components/SpotsPanel';
import type { GridRow } from '@shared/schemas/cell-table';
import './utils';

const row = { measurementId: 7, runId: 3, spotCount1: 12, spotCount2: 9, spotPaired1: 0.5, spotPaired2: 0.4, spotMutualPairs: 4, spotMedianNearest1: 2.5, spotMedianNearest2: 3, spotPValue: 0.01, spotChanceFraction1: 0.1 } as unknown as GridRow;

function show(pixelSizeUm: number | null) {
  return render(
    <SpotsPanel
      names={['GFP', 'RFP']}
      toggles={{ ch1: true, ch2: true, pairs: true }}
      onToggles={() => {}}
      live={{ on: false, sigma: 1.5, k: 5 }}
      onLive={() => {}}
      preview={null}
      previewError={null}
      stored={undefined}
      runId={3}
      cell={{ name: 'Cell 1', row, spots1: [[1, 1], [5, 5]], spots2: [[1.5, 1], [9, 9]], areaPx: 400 }}
      pairDistancePx={2}
      pixelSizeUm={pixelSizeUm}
    />,
  );
}

describe('SpotsPanel cell distances', () => {
  it('adds µm to the two distances when the pixel size is known', () => {
    show(0.1);
    expect(screen.getByText((_, el) => el?.getAttribute('data-measure') === 'spotMedianNearest1').textContent).toContain('(0.250 µm)');
    expect(screen.getByText((_, el) => el?.getAttribute('data-measure') === 'spotMedianNearest2').textContent).toContain('(0.300 µm)');
    expect(screen.getByText((_, el) => el?.getAttribute('data-measure') === 'spotCount1').textContent).not.toContain('µm');
  });
  it('adds nothing without a pixel size', () => {
    show(null);
    expect(screen.getByText((_, el) => el?.getAttribute('data-measure') === 'spotMedianNearest1').textContent).not.toContain('µm');
  });
});
