/**
 * The `analyze` calibration contract (issue 15): `--measure-shift`, `--shift DX,DY`, `--bleed A21,A12`,
 * `--measure-bleed 1|2`, and exit 2 with one `error:` line for bad values. References from
 * tests/fixtures/calibration/generate.py, named beside each check: the known synthetic shifts and
 * coefficients (ground truth), SciPy `ndimage.map_coordinates(order=1)` for the alignment with the same
 * dropped border, NumPy's 2×2 solve for the unmixing, and the coefficient references of
 * tests/fixtures/analysis/generate.py (SciPy stats, NumPy by definition, R energy) on those arrays.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { captureAnalyze } from './capture';
import { alignChannel, measureObjects, unmixChannels, REGION_RESULT_KEYS, type ObjectResult } from '../../shared/analysis/index';
import { writeTiffU16 } from '../images/tiffwrite';

const root = fileURLToPath(new URL('../../', import.meta.url));
const fx = (f: string) => join(root, 'tests/fixtures/calibration', f);
const expected = JSON.parse(readFileSync(fx('expected.json'), 'utf8'));
type Correction = { kind: string; shift: [number, number] | null; bleed: [number, number] | null; regions: Record<string, number | null>[] };

const { run, json } = captureAnalyze();

function near(a: number | null, b: number | null, what: string) {
  if (a === null || b === null) return expect(a, what).toBe(b);
  expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(b)));
}

const corrArgs = (c: Correction) => [...(c.shift ? ['--shift', c.shift.join(',')] : []), ...(c.bleed ? ['--bleed', c.bleed.join(',')] : [])];

describe('analyze --measure-shift', () => {
  for (const c of expected.shifts.slice(0, 3))
    it(`${c.file}: top-level "shift" {dx, dy} within 0.05 px of the known shift`, async () => {
      const j = await json('--image', fx(c.file), '--channels', '1,2', '--measure-shift');
      expect(Object.keys(j.shift)).toEqual(['dx', 'dy']);
      // ground truth of the synthetic field
      expect(Math.abs(j.shift.dx - c.truth.dx)).toBeLessThan(0.05);
      expect(Math.abs(j.shift.dy - c.truth.dy)).toBeLessThan(0.05);
      // scikit-image phase_cross_correlation on the prepared arrays
      expect(Math.abs(j.shift.dx - c.skimagePrepared.dx)).toBeLessThanOrEqual(0.0100001);
    });
  it('the measured shift, given back to --shift, leaves channel 2 in register (measured shift ≈ 0)', async () => {
    const c = expected.shifts[0];
    const j = await json('--image', fx(c.file), '--channels', '1,2', '--measure-shift');
    const k = await json('--image', fx(c.file), '--channels', '1,2', '--shift', `${j.shift.dx},${j.shift.dy}`);
    const raw = await json('--image', fx(c.file), '--channels', '1,2');
    // common practice: alignment raises Pearson's r of a shifted bead field
    expect(k.regions[0].pearson).toBeGreaterThan(raw.regions[0].pearson + 0.05);
    expect(k).not.toHaveProperty('shift');
  });
  it('without the calibration options the JSON has neither "shift" nor "bleed"', async () => {
    const j = await json('--image', fx('pair.tif'), '--channels', '1,2');
    expect(j).not.toHaveProperty('shift');
    expect(j).not.toHaveProperty('bleed');
  });
});

describe('analyze --shift / --bleed against SciPy map_coordinates and NumPy unmixing', () => {
  for (const c of expected.corrections as Correction[])
    it(`${c.kind} ${JSON.stringify({ shift: c.shift, bleed: c.bleed })}: every coefficient to 1e-9 relative`, async () => {
      const whole = await json('--image', fx('pair.tif'), '--channels', '1,2', ...corrArgs(c));
      const masked = await json('--image', fx('pair.tif'), '--channels', '1,2', '--mask', fx('labels.tif'), ...corrArgs(c));
      const got = [whole.regions[0], ...masked.regions];
      expect(got.map((r: { label: number }) => r.label)).toEqual([0, 1, 2, 3]);
      for (let k = 0; k < 4; k++) for (const key of REGION_RESULT_KEYS) near(got[k][key], c.regions[k][key] as number | null, `region ${k} ${key}`);
    });
  it('the dropped border shrinks every region that reaches it (pixels fall outside [0, W−1] × [0, H−1])', async () => {
    const plain = await json('--image', fx('pair.tif'), '--channels', '1,2', '--mask', fx('labels.tif'));
    const moved = await json('--image', fx('pair.tif'), '--channels', '1,2', '--mask', fx('labels.tif'), '--shift', '1.25,-0.6');
    // label 2 reaches the right border: columns with x + 1.25 > 63 go (2 columns), no rows (y − 0.6 < 0 only for row 0)
    expect(moved.regions[1].pixels).toBe(plain.regions[1].pixels - 2 * 28);
    expect(moved.regions[0].pixels).toBe(plain.regions[0].pixels);
  });
});

describe('analyze --measure-bleed', () => {
  it('a channel-1 control gives "bleed": {"a21"} within 2 % of the known value; a channel-2 control {"a12"}', async () => {
    for (const c of expected.controls) {
      const j = await json('--image', fx(c.file), '--channels', '1,2', '--measure-bleed', String(c.label));
      const key = c.label === 1 ? 'a21' : 'a12';
      expect(Object.keys(j.bleed)).toEqual([key]);
      // known coefficient of the synthetic control (Poisson noise, constant background)
      expect(Math.abs(j.bleed[key] - c.truth) / c.truth).toBeLessThan(0.02);
      // NumPy polyfit slope
      near(j.bleed[key], c.numpyPolyfit, `${c.file} ${key}`);
    }
  });
  it('the measured coefficient, given to --bleed, leaves the control channel with little of the label (common practice)', async () => {
    const c = expected.controls[0];
    const j = await json('--image', fx(c.file), '--channels', '1,2', '--measure-bleed', '1');
    const before = await json('--image', fx(c.file), '--channels', '1,2');
    const after = await json('--image', fx(c.file), '--channels', '1,2', '--bleed', `${j.bleed.a21},0`);
    expect(before.regions[0].pearson).toBeGreaterThan(0.5);
    expect(Math.abs(after.regions[0].pearson)).toBeLessThan(0.1);
  });
  it('the table states the shift and the coefficient', async () => {
    const r = await run('--image', fx(expected.controls[0].file), '--channels', '1,2', '--measure-bleed', '1', '--measure-shift');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^shift of channel 2: dx -?\d+\.\d\d px, dy -?\d+\.\d\d px$/m);
    expect(r.out).toMatch(/^bleed-through a21 0\.\d+$/m);
  });
});

describe('analyze calibration options: bad values → exit 2 and one error line quoting the value', () => {
  const bad = async (args: string[], pattern: RegExp) => {
    const r = await run('--image', fx('pair.tif'), '--channels', '1,2', ...args);
    expect(r.code, r.err).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toMatch(/^error: [^\n]+\n$/);
    expect(r.err).toMatch(pattern);
  };
  it('--shift', async () => {
    await bad(['--shift', '1'], /--shift must be two numbers DX,DY .*received "1"/);
    await bad(['--shift', '1,x'], /received "1,x"/);
    await bad(['--shift', '1,2,3'], /received "1,2,3"/);
    await bad(['--shift', ',2'], /received ",2"/);
    await bad(['--shift', 'Infinity,0'], /received "Infinity,0"/);
  });
  it('--bleed', async () => {
    await bad(['--bleed', '1,0'], /--bleed A21 must be a fraction in \[0, 1\), received "1,0"/);
    await bad(['--bleed', '0.1,-0.2'], /--bleed A12 .*received "0.1,-0.2"/);
    await bad(['--bleed', '0.1'], /received "0.1"/);
  });
  it('--measure-bleed', async () => {
    await bad(['--measure-bleed', '3'], /--measure-bleed must be 1 or 2 .*received "3"/);
    await bad(['--measure-bleed', 'a21'], /received "a21"/);
  });
  it('a negative shift is a value, not an option', async () => {
    const r = await run('--image', fx('pair.tif'), '--channels', '1,2', '--shift', '-3,2', '--json');
    expect(r.code, r.err).toBe(0);
  });
});

describe('analyze calibration as a process', () => {
  it('exit 0 with "shift" in the JSON; a bad --shift exits 2 with one line and no stack trace', async () => {
    const proc = (args: string[]) =>
      new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) => {
        const p = spawn('npm', ['run', '-s', 'analyze', '--', ...args], { cwd: root, env: { ...process.env, NO_COLOR: '1' } });
        let stdout = '', stderr = '';
        p.stdout.on('data', (d) => (stdout += d));
        p.stderr.on('data', (d) => (stderr += d));
        p.on('close', (code) => resolve({ code, stdout, stderr }));
      });
    const [ok, bad] = await Promise.all([
      proc(['--image', fx('pair.tif'), '--channels', '1,2', '--measure-shift', '--json']),
      proc(['--image', fx('pair.tif'), '--channels', '1,2', '--shift', 'left']),
    ]);
    expect(ok.code).toBe(0);
    expect(Object.keys(JSON.parse(ok.stdout).shift)).toEqual(['dx', 'dy']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/^error: --shift [^\n]+received "left"\n$/);
  }, 60000);
});

/**
 * --objects with --shift and --bleed: spots are detected on the aligned and unmixed channels, and the pixels
 * the shift drops (and those within the filter's reach of them) are searched in neither channel. Our own
 * synthetic fields (planted Gaussian spots, σ 1.5 px, amplitude 400 on a background of 100 with seeded
 * Gaussian noise of sd 4): the planted positions are the ground truth; the alignment itself is checked
 * against SciPy above.
 */
describe('analyze --objects on aligned and unmixed channels', () => {
  const W = 96, H = 64, SIGMA = 1.5, DX = 1.5, DY = -2.25;
  const normalFrom = (seed: number) => {
    let a = seed >>> 0;
    const uniform = () => {
      // mulberry32
      a = (a + 0x6d2b79f5) >>> 0;
      let t = a;
      t = Math.imul(t ^ (t >>> 15), t | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    return () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
  };
  /** the noise-free spot image plus background, as floats */
  const ideal = (spots: [number, number][]) => {
    const img = new Float64Array(W * H).fill(100);
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) for (const [cx, cy] of spots) img[y * W + x] += 400 * Math.exp(-((x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2) / (2 * SIGMA * SIGMA));
    return img;
  };
  const noisy = (img: Float64Array, seed: number) => {
    const normal = normalFrom(seed);
    return Uint16Array.from(img, (v) => Math.round(v + 4 * normal()));
  };
  // channel 1: four spots well inside, one in the band the shift drops on the right (x ≥ W − 2 go) and one
  // in the band at the top (rows y < 2.25 go); the filter reaches ⌈4σ⌉ = 6 px, so x > W − 10 and y < 10
  // are not searched
  const inner: [number, number][] = [[20.3, 25.6], [45.7, 30.2], [70.1, 45.5], [30.4, 50.2]];
  const truth1: [number, number][] = [...inner, [92.0, 40.3], [50.5, 5.2]];
  // channel 2 in register: partners of the first three inner spots and a loner; recorded displaced by
  // (DX, DY), so --shift DX,DY brings them back (ch2 is sampled at (x + DX, y + DY))
  const aligned2: [number, number][] = [...inner.slice(0, 3), [60.2, 20.4]];
  const ch1 = noisy(ideal(truth1), 21);
  const ch2 = noisy(ideal(aligned2.map(([x, y]) => [x + DX, y + DY])), 22);
  // bleed-through: channel 2 records its own two spots plus 0.4 × channel 1 (a21 = 0.4)
  const own2: [number, number][] = [[60.2, 20.4], [40.5, 45.3]];
  const bled2 = (() => {
    const c1 = ideal(inner), o2 = ideal(own2);
    const normal = normalFrom(23);
    return Uint16Array.from(o2, (v, i) => Math.round(v + 0.4 * c1[i] + 4 * normal()));
  })();
  const bled1 = noisy(ideal(inner), 24);
  const dir = mkdtempSync(join(tmpdir(), 'syntopy-cli-objects-shift-'));
  const f1 = join(dir, 'ch1.tif'), f2 = join(dir, 'ch2.tif'), b1 = join(dir, 'b1.tif'), b2 = join(dir, 'b2.tif');
  writeFileSync(f1, writeTiffU16([ch1], W, H));
  writeFileSync(f2, writeTiffU16([ch2], W, H));
  writeFileSync(b1, writeTiffU16([bled1], W, H));
  writeFileSync(b2, writeTiffU16([bled2], W, H));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const DEFAULTS = { spotSigma: 1.5, spotK: 5, pairDistance: 2, placements: 999, seed: 1 };
  const objectsOf = async (...args: string[]) => {
    const j = await json(...args, '--objects');
    expect(JSON.stringify(j)).not.toMatch(/NaN|Infinity/);
    return j.regions[0].objects as ObjectResult;
  };
  const matches = (found: [number, number][], truth: [number, number][]) => {
    expect(found.length).toBe(truth.length);
    for (const [tx, ty] of truth) {
      const d = Math.min(...found.map(([x, y]) => Math.hypot(x - tx, y - ty)));
      expect(d, `spot at (${tx}, ${ty})`).toBeLessThan(0.15);
    }
  };

  it('--shift: channel 2 spots where the alignment puts them, none in or near the dropped border, pairs as planted', async () => {
    const o = await objectsOf('--ch1', f1, '--ch2', f2, '--shift', `${DX},${DY}`);
    matches(o.spots1, inner);
    matches(o.spots2, aligned2);
    for (const [x, y] of [...o.spots1, ...o.spots2]) {
      expect(x).toBeLessThan(W - 9);
      expect(y).toBeGreaterThan(10);
    }
    expect([o.count1, o.count2, o.mutualPairs, o.paired1, o.paired2]).toEqual([4, 4, 3, 0.75, 0.75]);
    // without the shift the displaced partners are 2.7 px away: none paired at d = 2
    const raw = await objectsOf('--ch1', f1, '--ch2', f2);
    expect(raw.paired1).toBe(0);
    expect(raw.count1).toBe(6);
    // the same as the engine on the aligned channel, pixels without a value excluded
    const a2 = alignChannel(ch2, W, H, DX, DY);
    expect(o).toEqual(measureObjects(ch1, a2, W, H, null, { ...DEFAULTS, missing: 'exclude' }));
  });

  it('--shift with a mask: each region searched only away from the dropped pixels', async () => {
    const labels = new Uint16Array(W * H);
    for (let i = 0; i < labels.length; i++) labels[i] = i % W < 48 ? 1 : 2;
    const fl = join(dir, 'halves.tif');
    writeFileSync(fl, writeTiffU16([labels], W, H));
    const j = await json('--ch1', f1, '--ch2', f2, '--shift', `${DX},${DY}`, '--mask', fl, '--objects');
    const a2 = alignChannel(ch2, W, H, DX, DY);
    for (const reg of j.regions) {
      const idx = Uint32Array.from(Array.from(labels.keys()).filter((i) => labels[i] === reg.label));
      expect(reg.objects).toEqual(measureObjects(ch1, a2, W, H, idx, { ...DEFAULTS, missing: 'exclude' }));
    }
    expect(j.regions.map((r: { objects: ObjectResult }) => r.objects.count1)).toEqual([3, 1]);
  });

  it('--bleed: the bled-through copies of channel 1 are gone from channel 2 after unmixing', async () => {
    const raw = await objectsOf('--ch1', b1, '--ch2', b2);
    // without unmixing channel 2 shows every channel-1 spot at 0.4 × its brightness
    expect(raw.count2).toBe(6);
    expect(raw.paired1).toBe(1);
    const o = await objectsOf('--ch1', b1, '--ch2', b2, '--bleed', '0.4,0');
    matches(o.spots1, inner);
    matches(o.spots2, own2);
    expect([o.count2, o.paired1, o.mutualPairs]).toEqual([2, 0, 0]);
    const { t1, t2 } = unmixChannels(bled1, bled2, 0.4, 0);
    expect(o).toEqual(measureObjects(t1, t2, W, H, null, { ...DEFAULTS, missing: 'exclude' }));
  });

  it('--shift and --bleed together: the engine on the aligned, then unmixed channels', async () => {
    const o = await objectsOf('--ch1', f1, '--ch2', f2, '--shift', `${DX},${DY}`, '--bleed', '0.05,0.02');
    const { t1, t2 } = unmixChannels(ch1, alignChannel(ch2, W, H, DX, DY), 0.05, 0.02);
    expect(o).toEqual(measureObjects(t1, t2, W, H, null, { ...DEFAULTS, missing: 'exclude' }));
    matches(o.spots2, aligned2);
    expect(o.paired1).toBe(0.75);
  });
});
