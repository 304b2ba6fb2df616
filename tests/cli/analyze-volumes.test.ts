/**
 * `analyze` on z-stacks: every slice measured in 3D voxel by voxel (`--z`, label stacks, ROIs with a z range),
 * for per-channel stacks, OME-TIFF in both dimension orders and stacks whose description states the sizes.
 * Reference values: tests/fixtures/volumes/generate.py (SciPy pearsonr / spearmanr / kendalltau, R energy
 * dcor / bcdcor / dcorT.test, NumPy from the published definitions, scikit-image threshold_otsu), to 1e-9
 * relative on the voxels of each region.
 */
import { readFileSync, writeFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { captureAnalyze } from './capture';
import { measureObjects3D, REGION_RESULT_KEYS } from '../../shared/analysis/index';
import { writeTiffU16 } from '../images/tiffwrite';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
const fx = (f: string) => join(dir, f);
const expected = JSON.parse(readFileSync(fx('expected.json'), 'utf8'));
const tmp = mkdtempSync(join(tmpdir(), 'syntopy-vol-'));
type Ref = Record<string, number | string | null> & { label: number | string };

const { run, json } = captureAnalyze();

function near(a: number | null, b: number | null, what: string) {
  if (a === null || b === null) return expect(a, what).toBe(b);
  const tol = what.endsWith('dcorPValue') ? Math.max(1e-12, 1e-9 * Math.abs(b)) : 1e-9 * Math.max(1e-300, Math.abs(b));
  expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(tol);
}

function matches(regions: Ref[], refs: Ref[]) {
  expect(regions.map((r) => r.label)).toEqual(refs.map((r) => r.label));
  for (const reg of regions) {
    const ref = refs.find((x) => x.label === reg.label)!;
    for (const k of REGION_RESULT_KEYS) near(reg[k] as number | null, ref[k] as number | null, `${reg.label}.${k}`);
  }
}

/** The four ways one stack arrives; each must decode to the same (c, z) planes. */
const inputs = (name: string): [string, string[]][] => [
  ['per-channel stacks', ['--ch1', fx(`${name}.ch1.tif`), '--ch2', fx(`${name}.ch2.tif`)]],
  ['OME XYCZT', ['--image', fx(`${name}.xyczt.ome.tif`), '--channels', '1,2']],
  ['OME XYZCT', ['--image', fx(`${name}.xyzct.ome.tif`), '--channels', '1,2']],
  ['stated sizes', ['--image', fx(`${name}.stated.tif`), '--channels', '1,2']],
];

describe('analyze on z-stacks: values against SciPy / R energy / NumPy definitions', () => {
  it('covers 8-bit, 16-bit and float stacks', () => {
    expect(expected.cases.map((c: { name: string }) => c.name)).toEqual(['u8', 'u16', 'f32']);
  });
  for (const c of expected.cases) {
    const manual = ['--threshold', 'manual', '--t1', String(c.t1), '--t2', String(c.t2)];
    describe(`${c.name} (${c.dtype})`, () => {
      for (const [how, args] of inputs(c.name)) {
        it(`${how}: default --z all measures every slice in 3D; a label stack gives 3-D regions`, async () => {
          const j = await json(...args, '--mask', fx('labels3d.tif'), ...manual);
          expect(j).toMatchObject({ width: expected.width, height: expected.height, slices: expected.slices, depth: expected.slices, z: { from: 1, to: 5, projection: null } });
          matches(j.regions, c.labels3d.filter((r: Ref) => r.label !== 0));
        });
      }
      it('no regions: the whole volume is region 0', async () => {
        const j = await json(...inputs(c.name)[0][1], ...manual, '--z', 'all');
        matches(j.regions, c.labels3d.filter((r: Ref) => r.label === 0));
      });
      it('a one-plane label image applies to every measured slice', async () => {
        const j = await json(...inputs(c.name)[1][1], '--mask', fx('labels2d.tif'), ...manual);
        matches(j.regions, c.labels2d);
      });
      it('--z 2-4: slices 2..4 in 3D, only their voxels of the label stack', async () => {
        const j = await json(...inputs(c.name)[2][1], '--mask', fx('labels3d.tif'), '--z', '2-4', ...manual);
        expect(j.depth).toBe(3);
        expect(j.z).toEqual({ from: 2, to: 4, projection: null });
        matches(j.regions, c.labels3d_z2to4);
      });
      it('--z mip:2-4 and --z 3: one plane (depth 1)', async () => {
        const m = await json(...inputs(c.name)[3][1], '--z', 'mip:2-4', ...manual);
        expect(m).toMatchObject({ depth: 1, z: { from: 2, to: 4, projection: 'mip' } });
        matches(m.regions, c.mip2to4);
        const s = await json(...inputs(c.name)[0][1], '--z', '3', ...manual);
        expect(s).toMatchObject({ depth: 1, z: { from: 3, to: 3, projection: null } });
        matches(s.regions, c.slice3);
      });
      it('--rois: polygons extruded over their "z" range (default every slice)', async () => {
        const j = await json(...inputs(c.name)[0][1], '--rois', fx('rois.json'), ...manual);
        matches(j.regions, c.rois);
        expect(j.regions.map((r: { pixels: number }) => r.pixels)).toEqual(c.rois.map((r: Ref) => r.pixels));
      });
      it('Otsu over the voxels of all regions equals scikit-image / the stated float definition', async () => {
        const j = await json(...inputs(c.name)[0][1], '--mask', fx('labels3d.tif'), '--threshold', 'otsu');
        near(j.thresholds.ch1, c.otsu3d[0], 'otsu ch1');
        near(j.thresholds.ch2, c.otsu3d[1], 'otsu ch2');
      });
      for (const method of ['otsu', 'costes']) {
        it(`${method} in 3D is the 2-D definition on the same voxels (the slices laid out as one tall plane)`, async () => {
          const vol = await json(...inputs(c.name)[0][1], '--mask', fx('labels3d.tif'), '--threshold', method);
          const flat = await json('--image', fx(`${c.name}.tall.tif`), '--channels', '1,2', '--mask', fx('labels3d.tall.tif'), '--threshold', method);
          expect(flat.slices).toBe(1);
          expect(vol.thresholds).toEqual(flat.thresholds);
          // (the float case's channels fall with each other, so its Costes regression slope is ≤ 0: null by definition)
          if (method === 'otsu' || c.dtype !== 'float32') expect(vol.thresholds.ch1).not.toBeNull();
          expect(vol.regions).toEqual(flat.regions);
        });
      }
    });
  }
  it('the table states the slices measured', async () => {
    const a = await run(...inputs('u8')[0][1], '--z', '2-4');
    expect(a.out.split('\n')[0]).toMatch(/^image 22×18 × 5 slices · slices 2-4 in 3D · thresholds none/);
    const b = await run(...inputs('u8')[0][1], '--z', 'mip');
    expect(b.out.split('\n')[0]).toContain('maximum projection of slices 1-5');
  });
  it('--objects works on one measured plane of a stack, and in 3D given the slice spacing', async () => {
    const j = await json(...inputs('u16')[0][1], '--z', '3', '--objects', '--placements', '9');
    expect(j.regions[0].objects.count1).toBeGreaterThanOrEqual(0);
    expect(j.objectSettings).not.toHaveProperty('zStep');
    const v = await json(...inputs('u16')[0][1], '--objects', '--placements', '9', '--z-step', '2');
    expect(v.objectSettings.zStep).toBe(2);
    for (const p of [...v.regions[0].objects.spots1, ...v.regions[0].objects.spots2]) expect(p).toHaveLength(3);
    const r = await run(...inputs('u16')[0][1], '--objects');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/^error: --objects in 3D \(5 z slices\) needs the slice spacing: give --z-step [^\n]*\n$/);
  });
  it('--spot-sigma-z sets the axial spot scale in slices (default σ / --z-step) and is echoed; it needs spots in 3D', async () => {
    const args = [...inputs('u16')[0][1], '--objects', '--placements', '9', '--z-step', '2'];
    const dflt = await json(...args);
    // σ 1.5 px over 2 pixel widths per slice: σz 0.75 slices, the default rule given explicitly
    const same = await json(...args, '--spot-sigma-z', '0.75');
    expect(same.objectSettings).toEqual({ ...dflt.objectSettings, spotSigmaZ: 0.75 });
    expect(same.regions).toEqual(dflt.regions);
    expect(dflt.regions[0].objects.count1).not.toBeNull();
    // σz 3 slices: a centroid window 2·⌈6⌉ + 1 = 13 slices deep, deeper than the 5 slices: every measure null
    const deep = await json(...args, '--spot-sigma-z', '3');
    expect(deep.regions[0].objects.count1).toBeNull();
    const flat = await run(...inputs('u16')[0][1], '--z', '3', '--objects', '--spot-sigma-z', '1');
    expect(flat.code).toBe(2);
    expect(flat.err).toBe('error: --spot-sigma-z applies to spots found in 3D, but one plane is measured here (received "1"); measure several slices in 3D with --z or leave it out\n');
  });
});

describe('analyze on z-stacks: bad input exits 2 with one error line quoting the value', () => {
  async function bad(args: string[], msg: RegExp) {
    const r = await run(...args);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err.split('\n')).toHaveLength(2);
    expect(r.err).toMatch(/^error: /);
    expect(r.err).toMatch(msg);
  }
  const u8 = inputs('u8')[0][1];
  for (const v of ['0', '3-2', 'mip:', 'mip:2', 'mip:0-3', 'abc', '2-', '1.5', '-1', ''])
    it(`--z ${JSON.stringify(v)}`, () => bad([...u8, '--z', v], new RegExp(`--z must be all, N, A-B, mip or mip:A-B .*received ${JSON.stringify(v).replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}`)));
  for (const v of ['0', '-1', '51', 'x'])
    it(`--spot-sigma-z ${JSON.stringify(v)}`, () => bad([...u8, '--objects', '--z-step', '2', '--spot-sigma-z', v], new RegExp(`^error: --spot-sigma-z must be a number(?: of slices in \\(0, 50\\])?, received "${v}"$`, 'm')));
  it('--spot-sigma-z without --objects', () => bad([...u8, '--spot-sigma-z', '1'], /--spot-sigma-z applies to --objects only/));
  it('--z beyond the last slice', () => bad([...u8, '--z', '4-9'], /--z asks for slices 4-9, but the image has 5 z slices/));
  it('--z on a single plane', () => bad(['--ch1', fx('labels2d.tif'), '--ch2', fx('labels2d.tif'), '--z', '2'], /--z asks for slice 2, but the image has 1 z slice$/m));
  it('a label stack with another slice count', () => bad([...u8, '--mask', fx('labels3d_4slices.tif')], /labels3d_4slices\.tif has 4 slices but the image has 5; give a label stack with 5 slices or one plane/));
  it('a label stack with a projection', () => bad([...u8, '--mask', fx('labels3d.tif'), '--z', 'mip'], /is a label stack of 5 slices, but --z mip measures one projected plane/));
  it('an ROI "z" that is not [from, to]', () => {
    const f = join(tmp, 'badz.json');
    writeFileSync(f, JSON.stringify([{ name: 'a', points: [[0, 0], [4, 0], [4, 4]], z: [3, 2] }]));
    return bad([...u8, '--rois', f], /item 0 \("a"\) has "z": \[3,2\], not \[from, to\]/);
  });
  it('an ROI "z" beyond the last slice', () => {
    const f = join(tmp, 'farz.json');
    writeFileSync(f, JSON.stringify([{ name: 'a', points: [[0, 0], [4, 0], [4, 4]], z: [2, 7] }]));
    return bad([...u8, '--rois', f], /item 0 \("a"\) has "z": \[2,7\], but the image has 5 z slices/);
  });
  it('an ROI "z" with a projection', () => bad([...u8, '--rois', fx('rois.json'), '--z', 'mip'], /item 0 \("box"\) has "z", but --z mip measures one projected plane/));
  it('stated sizes that do not fit the page count (quoting both)', () =>
    bad(['--image', fx('bad_stated.tif'), '--channels', '1,2'], /bad_stated\.tif: the image description states 2 channels × 5 slices × 1 time point = 10 planes, but the file has 9 pages/));
  it('OME sizes that do not fit the page count (quoting both)', () =>
    bad(['--image', fx('bad_ome_pages.ome.tif'), '--channels', '1,2'], /the OME description declares 2 channels × 5 slices × 1 time point = 10 planes and places channel 2, slice 5 on page 10, but the file has 9 pages/));
  it('a colour file as a per-channel stack', () =>
    bad(['--ch1', join(fileURLToPath(new URL('../fixtures/analysis/', import.meta.url)), 'u8_rgb_contig.tif'), '--ch2', fx('u8.ch2.tif')], /--ch1 .*u8_rgb_contig\.tif: page 1 holds 3 samples per pixel/));
  it('stacks with different slice counts', () => bad(['--ch1', fx('u8.ch1.tif'), '--ch2', fx('labels3d_4slices.tif')], /--ch2 .* has 4 z slices but --ch1 .* has 5/));
});

/**
 * --objects on a stack measured in 3D: the planted 3D spot volume of tests/fixtures/spots/generate.py (σ 1.5
 * px laterally, 0.75 slices axially, slice spacing 2 pixel widths; ground-truth centres) as channel 1, the
 * same volume moved by one pixel in x as channel 2. Spots come back as [x, y, z], z in the stack's slices.
 */
describe('analyze --objects in 3D', () => {
  const sdir = fileURLToPath(new URL('../fixtures/spots/', import.meta.url));
  const spec = JSON.parse(readFileSync(join(sdir, 'expected.json'), 'utf8')).detection3d[0] as { file: string; width: number; height: number; depth: number; zScale: number; truth: [number, number, number][] };
  const { width: W, height: H, depth: D } = spec;
  const b = readFileSync(join(sdir, spec.file));
  const v1 = new Uint16Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
  const v2 = Uint16Array.from(v1, (v, i) => (i % W === 0 ? v : v1[i - 1]));
  const slices = (v: Uint16Array) => Array.from({ length: D }, (_, z) => v.subarray(z * W * H, (z + 1) * W * H));
  const f1 = join(tmp, 'spots3d.ch1.tif'), f2 = join(tmp, 'spots3d.ch2.tif');
  writeFileSync(f1, writeTiffU16(slices(v1), W, H));
  writeFileSync(f2, writeTiffU16(slices(v2), W, H));
  const opts = { spotSigma: 1.5, spotK: 5, pairDistance: 2, placements: 99, seed: 1 };

  it('every slice in 3D: [x, y, z] spots equal the engine on the volume, at the planted centres, paired 1 px apart', async () => {
    const j = await json('--ch1', f1, '--ch2', f2, '--objects', '--placements', '99', '--z-step', String(spec.zScale));
    const o = j.regions[0].objects;
    expect(o).toEqual(measureObjects3D(v1, v2, W, H, D, null, { ...opts, zScale: spec.zScale, missing: 'exclude' }));
    // ground truth: each planted centre found within 1 pixel width (z scaled)
    let hit = 0;
    for (const [x, y, z] of spec.truth) if (o.spots1.some((p: number[]) => Math.hypot(p[0] - x, p[1] - y, (p[2] - z) * spec.zScale) <= 1)) hit++;
    expect(hit / spec.truth.length).toBeGreaterThanOrEqual(0.95);
    expect(o.paired1).toBeGreaterThanOrEqual(0.95);
    expect(Math.abs(o.medianNearest1 - 1)).toBeLessThan(0.15);
    expect(j.depth).toBe(D);
  });

  it('--z A-B: z counts slices of the stack (0-based, centre at +0.5), the engine run on the sub-volume', async () => {
    const [A, B] = [5, 20];
    const j = await json('--ch1', f1, '--ch2', f2, '--objects', '--placements', '99', '--z-step', String(spec.zScale), '--z', `${A}-${B}`);
    const sub = (v: Uint16Array) => v.subarray((A - 1) * W * H, B * W * H);
    const want = measureObjects3D(sub(v1), sub(v2), W, H, B - A + 1, null, { ...opts, zScale: spec.zScale, missing: 'exclude' });
    const o = j.regions[0].objects;
    expect(o.count1).toBe(want.count1);
    // the sub-volume's z plus A − 1 (to the last bits: the offset is added after the centroid)
    expect(o.spots1.length).toBe(want.spots1.length);
    o.spots1.forEach((p: number[], k: number) => {
      const [x, y, z] = want.spots1[k];
      expect(Math.abs(p[0] - x) + Math.abs(p[1] - y) + Math.abs(p[2] - (z + A - 1))).toBeLessThan(1e-9);
    });
    for (const p of [...o.spots1, ...o.spots2]) expect(p[2] >= A - 1 && p[2] <= B).toBe(true);
  });
});
