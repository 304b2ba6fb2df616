/**
 * The workspace live preview (the scatter worker's code, src/features/workspace/scatter-core.ts) follows the
 * NaN rule of runs: on the float32 fixture with NaN pixels (tests/fixtures/analysis/f32nan.tif) a cell's
 * preview counts and correlates only the pixels with a value in both channels — SciPy's Pearson r on the
 * NaN-dropped pairs (tests/fixtures/analysis/generate.py, `nanField`, no background) to 1e-9 relative.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeChannel } from '../../server/images/decode.js';
import { livePreview, prepareRegion, scatter } from '../../src/features/workspace/lib/scatterCore';

const DIR = path.join(import.meta.dirname, '../fixtures/analysis');
const ref = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8')).nanField;

describe('live preview on float data with NaN pixels', () => {
  it('pixel count, quadrant counts and Pearson r over the NaN-dropped pixels of each cell', async () => {
    const bytes = new Uint8Array(fs.readFileSync(path.join(DIR, 'f32nan.tif')));
    const [a, b] = [await decodeChannel(bytes, 1), await decodeChannel(bytes, 2)];
    const img = { width: a.width, height: a.height, ch1: a.slices[0] as Float32Array, ch2: b.slices[0] as Float32Array, saturationLevel: null };
    for (const c of ref.cells as { name: string; rect: [number, number, number, number] }[]) {
      const want = ref.variants[0].cells[c.name];
      const [x, y, width, height] = c.rect;
      const region = prepareRegion(img, { kind: 'rect', x, y, width, height });
      expect(region.n, c.name).toBe(want.pixels);
      expect(ref.nanPixels[c.name]).toBeGreaterThan(0);
      const q = scatter(region, region.otsu.t1!, region.otsu.t2!).quadrants;
      expect(q.both + q.only1 + q.only2 + q.neither).toBe(want.pixels);
      const live = livePreview(region, region.otsu.t1!, region.otsu.t2!);
      expect(live.pixels).toBe(want.pixels);
      // the preview computes coefficients for small cells too (no smallest-cell rule); compare where SciPy has one
      if (want.pearson !== null) expect(Math.abs(live.pearson! - want.pearson) / Math.abs(want.pearson)).toBeLessThan(1e-9);
      else expect(Number.isFinite(live.pearson)).toBe(true);
    }
  });
});
