/**
 * computeField (server/runs/compute.ts): the recipe rules around the engine. References: the engine itself
 * on independently prepared inputs (identity checks), and hand-computed values (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { computeField, blockPixels, dropSpareBuffers, project, zRange, FieldJobError } from '../../server/runs/compute.js';
import { selectZ } from '../../server/images/intake.js';
import type { FieldJob } from '../../server/runs/job.js';
import { RecipeSettings, describeSetting, type RecipeSettingsInput } from '../../shared/schemas/recipes.js';
import { alignChannel, measureRegion, unmixChannels } from '../../shared/analysis/index.js';
import { cellIndices } from '../../shared/schemas/cells.js';
import { syntheticPair } from './helpers.js';
import { COEFFICIENTS } from '../../shared/coefficients.js';

const W = 64, H = 48;
const [A, B] = syntheticPair(W, H, 77);
const rect = (x: number, y: number, w: number, h: number) => ({ kind: 'rect' as const, x, y, width: w, height: h });

function job(settings: RecipeSettingsInput, cells: FieldJob['cells'], extra: Partial<FieldJob> = {}): FieldJob {
  return {
    runId: 1,
    fieldId: 1,
    fieldName: 'F',
    sources: [{ key: 'k1', sha256: 'a'.repeat(64), channel: 1 }, { key: 'k1', sha256: 'a'.repeat(64), channel: 2 }],
    width: W,
    height: H,
    sizeZ: 1,
    bitDepth: 16,
    sampleFormat: 'uint',
    pixelSizeUm: null,
    cells,
    settings: RecipeSettings.parse(settings),
    recipe: { id: 1, name: 'R', version: 1, status: 'approved' },
    provisional: false,
    calibration: null,
    calibrationProblem: null,
    ...extra,
  };
}

describe('computeField', () => {
  it('writes every registry measure (dCor df included) as the engine computed it, and nulls those the recipe did not ask for', () => {
    const g = rect(8, 8, 20, 16);
    const idx = cellIndices(g, W, H);
    const [all] = computeField(job({ threshold: { method: 'none' } }, [{ id: 1, role: 'cell', geometry: g }]), { width: W, height: H, ch1: A, ch2: B });
    const ref = measureRegion(A, B, idx, { width: W, height: H, threshold: { method: 'none' } });
    for (const c of COEFFICIENTS) expect(all, c.key).toHaveProperty(c.key);
    expect(all.dcorDf).toBe(ref.dcorDf);
    expect(all.dcorDf).toBe(idx.length * (idx.length - 3) / 2 - 1);
    const [some] = computeField(job({ threshold: { method: 'none' }, coefficients: ['pearson', 'manders'] }, [{ id: 1, role: 'cell', geometry: g }]), { width: W, height: H, ch1: A, ch2: B });
    for (const c of COEFFICIENTS) {
      const kept = c.recipeChoice === null || c.recipeChoice === 'pearson' || c.recipeChoice === 'manders';
      if (c.key === 'pixels') expect(some.pixels).toBe(idx.length);
      else if (kept) expect(some[c.key], c.key).toBe(all[c.key]);
      else expect(some[c.key], c.key).toBeNull();
    }
  });

  it('MICe/TICe: off in a new recipe (null), computed with the recipe\'s alpha and c when chosen', () => {
    const g = rect(8, 8, 20, 16);
    const idx = cellIndices(g, W, H);
    const cell = [{ id: 1, role: 'cell' as const, geometry: g }];
    expect(RecipeSettings.parse({}).coefficients).not.toContain('mic');
    const [off] = computeField(job({ threshold: { method: 'none' } }, cell), { width: W, height: H, ch1: A, ch2: B });
    expect(off.micE).toBeNull();
    expect(off.ticE).toBeNull();
    const [on] = computeField(job({ threshold: { method: 'none' }, coefficients: ['pearson', 'mic'], mic: { alpha: 0.7, c: 5 } }, cell), { width: W, height: H, ch1: A, ch2: B });
    const ref = measureRegion(A, B, idx, { threshold: { method: 'none' }, mic: { alpha: 0.7, c: 5 } });
    expect(on.micE).toBe(ref.micE);
    expect(on.ticE).toBe(ref.ticE);
    expect(on.micE).not.toBe(measureRegion(A, B, idx, { mic: {} }).micE);
    expect(() => RecipeSettings.parse({ mic: { alpha: 0, c: 15 } })).toThrow(/alpha must be above 0/);
    // the recipe sentence states the cost, chosen or not (measured by tests/bench/mic.bench.ts)
    expect(describeSetting('mic', RecipeSettings.parse({}))).toMatch(/^MICe and TICe are not computed\. They cost up to about half a second .* per 20,000-pixel cell/);
    expect(describeSetting('mic', RecipeSettings.parse({ coefficients: ['mic'], mic: { alpha: 0.7, c: 5 } }))).toMatch(/computed with grids of at most n\^0\.7 cells .* at most 5 × n\^0\.7 \/ rows clumps\. They cost/);
  });

  it('saturation "exclude" drops pixels saturated in either channel; fractions count them', () => {
    const a = A.slice(), b = B.slice();
    const g = rect(4, 4, 10, 10);
    const idx = cellIndices(g, W, H);
    a[idx[0]] = 65535; a[idx[1]] = 65535; b[idx[1]] = 65535; b[idx[2]] = 65535; // 3 distinct pixels, 2 per channel
    const [keep] = computeField(job({ saturation: 'keep', threshold: { method: 'none' } }, [{ id: 1, role: 'cell', geometry: g }]), { width: W, height: H, ch1: a, ch2: b });
    const [excl] = computeField(job({ saturation: 'exclude', threshold: { method: 'none' } }, [{ id: 1, role: 'cell', geometry: g }]), { width: W, height: H, ch1: a, ch2: b });
    expect(keep.pixels).toBe(100);
    expect(excl.pixels).toBe(97);
    expect(keep.saturatedFraction1).toBeCloseTo(0.02, 12);
    expect(keep.saturatedFraction2).toBeCloseTo(0.02, 12);
    const ref = measureRegion(a, b, Array.from(idx).filter((i) => a[i] < 65535 && b[i] < 65535), {});
    expect(excl.pearson).toBe(ref.pearson);
    expect(excl.kendallTauB).toBe(ref.kendallTauB);
  });

  it('a constant background is subtracted with a floor at 0 and recorded', () => {
    const g = rect(10, 10, 20, 20);
    const [m] = computeField(job({ background: { method: 'constant', ch1: 150, ch2: 120 }, threshold: { method: 'none' } }, [{ id: 1, role: 'cell', geometry: g }]), { width: W, height: H, ch1: A, ch2: B });
    const a = Uint16Array.from(A, (v) => Math.max(0, v - 150));
    const b = Uint16Array.from(B, (v) => Math.max(0, v - 120));
    const ref = measureRegion(a, b, cellIndices(g, W, H), {});
    expect(m.pearson).toBe(ref.pearson);
    expect(m.mandersM1).toBe(ref.mandersM1);
    expect([m.background1, m.background2]).toEqual([150, 120]);
    expect(m.mean1).toBeGreaterThanOrEqual(0);
  });

  it('cells below the smallest size get a row of nulls with a note; unchosen coefficients are null', () => {
    const rows = computeField(
      job({ minCellPixels: 50, coefficients: ['pearson', 'icq'] }, [
        { id: 1, role: 'cell', geometry: rect(0, 0, 5, 5) },
        { id: 2, role: 'cell', geometry: rect(20, 20, 10, 10) },
      ]),
      { width: W, height: H, ch1: A, ch2: B },
    );
    expect(rows[0]).toMatchObject({ cellId: 1, pixels: 25, pearson: null, icq: null, mandersM1: null });
    expect(rows[0].provenance.note).toMatch(/fewer than 50/);
    expect(rows[1].pearson).not.toBeNull();
    expect(rows[1].icq).not.toBeNull();
    expect(rows[1]).toMatchObject({ spearman: null, kendallTauB: null, distanceCorrelation: null, mandersM1: null, overlap: null });
  });

  it('thresholdScope "field": one pair of thresholds over the union of the cells', () => {
    const cells = [
      { id: 1, role: 'cell' as const, geometry: rect(0, 0, 30, 30) },
      { id: 2, role: 'cell' as const, geometry: rect(30, 10, 30, 30) },
    ];
    const perCell = computeField(job({ threshold: { method: 'otsu' } }, cells), { width: W, height: H, ch1: A, ch2: B });
    const perField = computeField(job({ threshold: { method: 'otsu' }, thresholdScope: 'field' }, cells), { width: W, height: H, ch1: A, ch2: B });
    expect(perField[0].threshold1).toBe(perField[1].threshold1);
    expect(perField[0].threshold2).toBe(perField[1].threshold2);
    const union = new Set([...cellIndices(cells[0].geometry, W, H), ...cellIndices(cells[1].geometry, W, H)]);
    const ref = measureRegion(A, B, [...union].sort((x, y) => x - y), { threshold: { method: 'otsu' } });
    expect(perField[0].threshold1).toBe(ref.thresholds.ch1);
    expect(perCell[0].threshold1).not.toBeNull();
  });

  it('the "region" background needs a marked region and names the field otherwise', () => {
    expect(() => computeField(job({ background: { method: 'region' } }, [{ id: 1, role: 'cell', geometry: rect(0, 0, 9, 9) }]), { width: W, height: H, ch1: A, ch2: B })).toThrow(/"F" has none marked/);
  });

  it('block size from the point-spread width and pixel size (0.6 µm / 0.2 µm = 3 px); none without a pixel size', () => {
    const s = (b: object) => RecipeSettings.parse({ randomization: { enabled: true, blockSize: b } });
    expect(blockPixels(s({ kind: 'psf', psfWidthUm: 0.6, pixelSizeUm: 0.2 }), null)).toBe(3);
    expect(blockPixels(s({ kind: 'psf', psfWidthUm: 0.6 }), 0.13)).toBe(5);
    expect(() => blockPixels(s({ kind: 'psf', psfWidthUm: 0.6 }), null)).toThrow(FieldJobError);
    expect(blockPixels(RecipeSettings.parse({}), 0.1)).toBeNull();
  });

  it('z handling: maximum-intensity projection per pixel; slices out of range are refused', () => {
    const s = [Uint16Array.of(1, 9, 3), Uint16Array.of(4, 2, 3), Uint16Array.of(0, 0, 8)];
    expect(Array.from(project(s, 0, 2))).toEqual([4, 9, 8]);
    expect(Array.from(project(s, 1, 1))).toEqual([4, 2, 3]);
    expect(zRange({ mode: 'mip' }, 3)).toEqual([0, 2]);
    expect(zRange({ mode: 'range', from: 1, to: 2 }, 3)).toEqual([1, 2]);
    expect(() => zRange({ mode: 'slice', slice: 3 }, 3)).toThrow(/slice 4, but the field has 3 slices/);
  });

  it('maximum-intensity projection of float data: the max over the slices with a value, NaN only when every slice is NaN', () => {
    const N = NaN;
    const s = [Float32Array.of(N, 2, N, 5), Float32Array.of(3, N, N, 1), Float32Array.of(1, 7, N, N)];
    expect(Array.from(project(s, 0, 2))).toEqual([3, 7, N, 5]);
    expect(Array.from(project(s, 0, 1))).toEqual([3, 2, N, 5]);
    // the same function serves the pixels/preview endpoints (selectZ 'mip')
    const sel = selectZ({ ch1: s, ch2: s, sizeZ: 3 }, 'mip');
    expect(Array.from(sel.ch1)).toEqual([3, 7, N, 5]);
  });
});

describe('computeField with a calibration (recipe setting "approved")', () => {
  const cal = { id: 7, instrumentId: 3, instrument: 'Scope', version: 2, dx: 1.25, dy: -0.6, a21: 0.1, a12: 0.05 };
  const g = rect(40, 0, 24, 20); // reaches the top and right borders, which the shift drops
  it('aligns channel 2, then unmixes, then measures; equals the engine on independently corrected channels; records the calibration', () => {
    const [m] = computeField(job({ threshold: { method: 'none' }, calibration: 'approved' }, [{ id: 1, role: 'cell', geometry: g }], { calibration: cal }), { width: W, height: H, ch1: A, ch2: B });
    const { t1, t2 } = unmixChannels(A, alignChannel(B, W, H, 1.25, -0.6), 0.1, 0.05);
    const all = cellIndices(g, W, H);
    const idx = all.filter((i) => !Number.isNaN(t2[i]));
    const ref = measureRegion(t1, t2, Uint32Array.from(idx), { width: W, height: H, threshold: { method: 'none' } });
    // columns x + 1.25 > 63 (2) and the row y − 0.6 < 0 (1) are not measured
    expect(m.pixels).toBe(all.length - 2 * 20 - 22);
    expect(m.pixels).toBe(ref.pixels);
    for (const k of ['pearson', 'spearman', 'kendallTauB', 'mandersM1', 'overlap', 'icq'] as const) expect(m[k], k).toBe(ref[k]);
    expect(m.provenance.calibration).toEqual(cal);
    expect(m.provenance.nanPixels).toBe(2 * 20 + 22);
  });
  it('without the setting nothing is corrected, even when a calibration is present', () => {
    const [m] = computeField(job({ threshold: { method: 'none' } }, [{ id: 1, role: 'cell', geometry: g }], { calibration: cal }), { width: W, height: H, ch1: A, ch2: B });
    expect(m.pixels).toBe(cellIndices(g, W, H).length);
    expect(m.provenance.calibration).toBeNull();
  });
  it('fields measured one after another in a thread (the one-pass arrays reused) equal each field measured alone', () => {
    // different shifts, so the NaN border moves: a stale value from the previous field would show
    const cal2 = { ...cal, id: 8, dx: -2.5, dy: 1.75, a21: 0.02, a12: 0.2 };
    const [C, D] = syntheticPair(W, H, 78);
    const measure = (c: typeof cal, ch1: Uint16Array, ch2: Uint16Array) =>
      computeField(job({ threshold: { method: 'none' }, calibration: 'approved' }, [{ id: 1, role: 'cell', geometry: rect(0, 0, W, H) }], { calibration: c }), { width: W, height: H, ch1, ch2 })[0];
    dropSpareBuffers();
    const alone2 = measure(cal2, C, D);
    dropSpareBuffers();
    const alone1 = measure(cal, A, B);
    // now in sequence, each taking the arrays the other gave back
    const again2 = measure(cal2, C, D);
    const again1 = measure(cal, A, B);
    for (const [x, y] of [[again1, alone1], [again2, alone2]] as const) {
      expect(x.pixels).toBe(y.pixels);
      for (const k of ['pearson', 'spearman', 'kendallTauB', 'mandersM1', 'mandersM2', 'overlap', 'icq', 'distanceCorrelation'] as const) expect(x[k], k).toBe(y[k]);
    }
    expect(again1.pixels).not.toBe(again2.pixels);
    // pixels dropped by the shift: exactly the uncovered border of each field (W·H minus the covered rectangle)
    expect(again2.provenance.nanPixels).toBe(W * H - (W - 3) * (H - 2));
  });
  it('a field without an approved calibration fails with the reason instead of being measured uncorrected', () => {
    const j = job({ calibration: 'approved' }, [{ id: 1, role: 'cell', geometry: g }], { calibrationProblem: 'instrument Scope of field F has no approved calibration' });
    expect(() => computeField(j, { width: W, height: H, ch1: A, ch2: B })).toThrow(FieldJobError);
    expect(() => computeField(j, { width: W, height: H, ch1: A, ch2: B })).toThrow(/Scope of field F has no approved calibration/);
  });
});
