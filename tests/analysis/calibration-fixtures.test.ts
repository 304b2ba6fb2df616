/**
 * Calibration engine against outside references (tests/fixtures/calibration/generate.py):
 *  - shift: the known synthetic shifts (ground truth, Fourier shift theorem) within 0.05 px, and
 *    scikit-image 0.19 `skimage.registration.phase_cross_correlation(upsample_factor=100)` on the same
 *    prepared arrays (mean removed, Tukey taper, zero padding) to one grid step (0.01 px);
 *  - bleed-through: the known coefficient of synthetic single-label controls (Poisson noise, constant
 *    background) within 2 %, and NumPy's least-squares slope (`numpy.polyfit`, degree 1) to 1e-9 relative.
 * The alignment and unmixing references (SciPy map_coordinates, NumPy solve) are checked through the
 * `analyze` command in tests/cli/analyze-calibration.test.ts.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { decodeChannels } from '../../server/images/decode';
import { bleedThroughSlope, measureShift } from '../../shared/analysis/index';

const dir = fileURLToPath(new URL('../fixtures/calibration/', import.meta.url));
interface Shift {
  dx: number;
  dy: number;
}
const fixture = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as {
  upsample: number;
  shifts: { file: string; width: number; height: number; truth: Shift; skimageRaw: Shift; skimagePrepared: Shift }[];
  controls: { file: string; label: 1 | 2; truth: number; numpyPolyfit: number }[];
};

describe('measureShift on known synthetic shifts', () => {
  for (const c of fixture.shifts)
    it(`${c.file} (${c.width}×${c.height}, truth ${c.truth.dx}, ${c.truth.dy})`, async () => {
      const d = await decodeChannels(join(dir, c.file), [1, 2]);
      const s = measureShift(d.ch1[0], d.ch2[0], d.width, d.height, { upsample: fixture.upsample });
      // ground truth (Fourier shift theorem), issue tolerance 0.05 px
      expect(Math.abs(s.dx! - c.truth.dx)).toBeLessThan(0.05);
      expect(Math.abs(s.dy! - c.truth.dy)).toBeLessThan(0.05);
      // scikit-image phase_cross_correlation on the prepared arrays: the same peak, to one 1/100 px step
      expect(Math.abs(s.dx! - c.skimagePrepared.dx)).toBeLessThanOrEqual(0.0100001);
      expect(Math.abs(s.dy! - c.skimagePrepared.dy)).toBeLessThanOrEqual(0.0100001);
      expect(s.peak!).toBeGreaterThan(0);
      expect(s.peak!).toBeLessThanOrEqual(1);
    });
});

describe('bleedThroughSlope on single-label controls', () => {
  for (const c of fixture.controls)
    it(`${c.file} (label in channel ${c.label}, truth ${c.truth})`, async () => {
      const d = await decodeChannels(join(dir, c.file), [1, 2]);
      const [labelled, seen] = c.label === 1 ? [d.ch1[0], d.ch2[0]] : [d.ch2[0], d.ch1[0]];
      const a = bleedThroughSlope(labelled, seen)!;
      // known coefficient of the synthetic control, issue tolerance 2 %
      expect(Math.abs(a - c.truth) / c.truth).toBeLessThan(0.02);
      // NumPy polyfit (least squares with intercept)
      expect(Math.abs(a - c.numpyPolyfit)).toBeLessThanOrEqual(1e-9 * Math.abs(c.numpyPolyfit));
    });
});
