/**
 * The `analyze` calibration contract (issue 15): `--measure-shift`, `--shift DX,DY`, `--bleed A21,A12`,
 * `--measure-bleed 1|2`, and exit 2 with one `error:` line for bad values. References from
 * tests/fixtures/calibration/generate.py, named beside each check: the known synthetic shifts and
 * coefficients (ground truth), SciPy `ndimage.map_coordinates(order=1)` for the alignment with the same
 * dropped border, NumPy's 2×2 solve for the unmixing, and the coefficient references of
 * tests/fixtures/analysis/generate.py (SciPy stats, NumPy by definition, R energy) on those arrays.
 */
import { spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { captureAnalyze } from './capture';
import { REGION_RESULT_KEYS } from '../../shared/analysis/index';

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
  it('--objects with --shift', () => bad(['--objects', '--shift', '1,1'], /--objects cannot be combined with --shift/));
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
