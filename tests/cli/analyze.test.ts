/**
 * The `analyze` command contract: JSON shape and values, exit codes, and one `error:` line for
 * each kind of bad input. Values are checked against the reference fixtures (SciPy, R energy; see
 * tests/fixtures/analysis/generate.py). Most cases call `main()` in-process (fast); a few spawn
 * `npm run -s analyze` to check the real exit code and that no stack trace reaches stderr.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { HELP, main } from '../../server/cli/analyze';
import { REGION_RESULT_KEYS } from '../../shared/analysis/index';

const root = fileURLToPath(new URL('../../', import.meta.url));
const fx = (f: string) => join(root, 'tests/fixtures/analysis', f);
const expected = JSON.parse(readFileSync(fx('expected.json'), 'utf8'));
const u8 = expected.cases.find((c: { name: string }) => c.name === 'u8');
const tmp = mkdtempSync(join(tmpdir(), 'syntopy-cli-'));

let out = '';
let err = '';
beforeEach(() => {
  out = '';
  err = '';
  vi.spyOn(process.stdout, 'write').mockImplementation((s: string | Uint8Array) => ((out += String(s)), true));
  vi.spyOn(process.stderr, 'write').mockImplementation((s: string | Uint8Array) => ((err += String(s)), true));
});
afterEach(() => vi.restoreAllMocks());

async function run(...args: string[]) {
  out = '';
  err = '';
  const code = await main(args);
  return { code, out, err };
}

function near(a: number | null, b: number | null, what: string) {
  if (a === null || b === null) return expect(a, what).toBe(b);
  expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(b)));
}

describe('analyze: results', () => {
  it('--image --channels --json: one object with width, height, thresholds, regions (label 0 = whole image)', async () => {
    const r = await run('--image', fx('u8.tif'), '--channels', '1,2', '--threshold', 'manual', '--t1', '20', '--t2', '15', '--json');
    expect(r.code).toBe(0);
    expect(r.err).toBe('');
    const j = JSON.parse(r.out);
    expect(j.width).toBe(48);
    expect(j.height).toBe(40);
    expect(j.thresholds).toEqual({ method: 'manual', ch1: 20, ch2: 15 });
    expect(j.regions).toHaveLength(1);
    expect(j.regions[0].label).toBe(0);
    for (const k of REGION_RESULT_KEYS) near(j.regions[0][k], u8.regions[0][k], k);
    expect(r.out).not.toMatch(/NaN|Infinity/);
  });
  it('--mask: one region per label value, against SciPy / R energy references', async () => {
    const r = await run('--ch1', fx('u8_ch1.tif'), '--ch2', fx('u8_ch2.tif'), '--mask', fx('labels.tif'), '--threshold', 'manual', '--t1', '20', '--t2', '15', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.regions.map((x: { label: number }) => x.label)).toEqual([1, 5, 9]);
    for (const reg of j.regions) {
      const ref = u8.regions.find((x: { label: number }) => x.label === reg.label);
      for (const k of REGION_RESULT_KEYS) near(reg[k], ref[k], `${reg.label}.${k}`);
    }
  });
  it('--rois: polygons by the pixel-centre rule, label = ROI name', async () => {
    const r = await run('--image', fx('u8.tif'), '--channels', '1,2', '--rois', fx('rois.json'), '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.regions.map((x: { label: string }) => x.label)).toEqual(['box', 'tri']);
    for (const reg of j.regions) {
      const ref = expected.rois.find((x: { label: string }) => x.label === reg.label);
      for (const k of REGION_RESULT_KEYS) near(reg[k], ref[k], `${reg.label}.${k}`);
    }
  });
  it('RGB samples (interleaved and planar) as channels give the same numbers as the two-page file', async () => {
    const get = async (f: string) => {
      expect((await run('--image', fx(f), '--channels', '1,2', '--json')).code).toBe(0);
      return JSON.parse(out).regions[0];
    };
    const a = await get('u8.tif');
    expect(await get('u8_rgb_contig.tif')).toEqual(a);
    expect(await get('u8_rgb_planar.tif')).toEqual(a);
  });
  it('thresholds are computed once over all regions; otsu and costes report their values', async () => {
    const r = await run('--image', fx('u16.tif'), '--channels', '1,2', '--mask', fx('labels.tif'), '--threshold', 'costes', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.thresholds.method).toBe('costes');
    expect(j.thresholds.ch1).toBeGreaterThan(60000);
    const o = await run('--image', fx('u8.tif'), '--channels', '2,1', '--threshold', 'otsu', '--json');
    expect(o.code).toBe(0);
    expect(Number.isInteger(JSON.parse(o.out).thresholds.ch1)).toBe(true);
  });
  it('without --json: a readable table with a header row', async () => {
    const r = await run('--image', fx('u8.tif'), '--channels', '1,2', '--mask', fx('labels.tif'));
    expect(r.code).toBe(0);
    const lines = r.out.trim().split('\n');
    expect(lines[0]).toMatch(/48×40/);
    expect(lines[1]).toMatch(/^region\s+pixels\s+r\s+rho\s+tau-b\s+dCor/);
    expect(lines).toHaveLength(5);
  });
});

describe('analyze: bad input → exit 2 and one error line', () => {
  const bad = async (args: string[], pattern: RegExp) => {
    const r = await run(...args);
    expect(r.code, r.err).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toMatch(/^error: .+\n$/);
    expect(r.err.split('\n')).toHaveLength(2);
    expect(r.err).toMatch(pattern);
  };
  // inputs made here from the fixtures
  const truncated = join(tmp, 'truncated.tif');
  const full = readFileSync(fx('u16.tif'));
  writeFileSync(truncated, full.subarray(0, Math.floor(full.length / 2)));
  const absurd = join(tmp, 'absurd.tif');
  {
    // set ImageWidth (256) and ImageLength (257) of the first IFD to 65535 (a 4.3-gigapixel page)
    const b = Buffer.from(readFileSync(fx('u8_ch1.tif')));
    expect(b.toString('latin1', 0, 2)).toBe('II');
    const ifd = b.readUInt32LE(4);
    const n = b.readUInt16LE(ifd);
    for (let k = 0; k < n; k++) {
      const e = ifd + 2 + 12 * k;
      const tag = b.readUInt16LE(e);
      if (tag === 256 || tag === 257) {
        if (b.readUInt16LE(e + 2) === 3) b.writeUInt16LE(65535, e + 8);
        else b.writeUInt32LE(65535, e + 8);
      }
    }
    writeFileSync(absurd, b);
  }
  const dirPath = join(tmp, 'a-directory.tif');
  mkdirSync(dirPath, { recursive: true });
  writeFileSync(join(tmp, 'bad.json'), '[{"name": "x", "points": [[1, 2]]}]');
  writeFileSync(join(tmp, 'broken.json'), '[{"name": ');

  it('missing file', () => bad(['--ch1', join(tmp, 'nope.tif'), '--ch2', fx('u8_ch2.tif')], /--ch1 .*nope\.tif: no such file/));
  it('unreadable file (a directory)', () => bad(['--image', dirPath, '--channels', '1,2'], /a-directory\.tif: not a file/));
  it('not a TIFF', () => bad(['--image', fx('rois.json'), '--channels', '1,2'], /rois\.json: this is not a TIFF/));
  it('truncated TIFF', () => bad(['--image', truncated, '--channels', '1,2'], /truncated\.tif: .*(truncated|damaged|outside|end)/i));
  it('sizes that differ', () => bad(['--ch1', fx('u8_ch1.tif'), '--ch2', fx('u8_small.tif')], /32×24 but --ch1 .* is 48×40/));
  it('channel out of range', () => bad(['--image', fx('u8.tif'), '--channels', '1,3'], /channel 3 does not exist/));
  it('absurd size in the header', () => bad(['--image', absurd, '--channels', '1,1'], /absurd\.tif: .*65535/));
  it('mask of another size', () => bad(['--ch1', fx('u8_small.tif'), '--ch2', fx('u8_small.tif'), '--mask', fx('labels.tif')], /48×40 but the field is 32×24/));
  it('malformed options', async () => {
    await bad(['--image', fx('u8.tif'), '--channels', 'one,two'], /--channels must be two 1-based channel numbers .*"one,two"/);
    await bad(['--image', fx('u8.tif'), '--channels', '0,1'], /"0,1"/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--threshold', 'magic'], /--threshold must be .*"magic"/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--threshold', 'manual', '--t1', 'abc', '--t2', '3'], /--t1 must be a number, received "abc"/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--threshold', 'manual', '--t1', '3'], /needs both --t1 and --t2/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--t1', '3', '--t2', '3'], /manual only/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--frobnicate'], /Unknown option '--frobnicate'/);
    await bad(['--image', fx('u8.tif')], /--image needs --channels/);
    await bad(['--ch1', fx('u8.tif')], /--ch1 and --ch2 go together/);
    await bad(['--ch1', fx('u8.tif'), '--ch2', fx('u8.tif'), '--image', fx('u8.tif'), '--channels', '1,2'], /not both/);
    await bad([], /no image given/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--mask', fx('labels.tif'), '--rois', fx('rois.json')], /--mask or --rois, not both/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--rois', join(tmp, 'bad.json')], /bad\.json: expected an array .*item 0 \("x"\) has 1 points, a polygon needs at least 3/);
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--rois', join(tmp, 'broken.json')], /broken\.json: not valid JSON/);
  });
});

describe('analyze as a process (npm run -s analyze)', () => {
  const proc = (args: string[]) =>
    new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) => {
      const p = spawn('npm', ['run', '-s', 'analyze', '--', ...args], { cwd: root, env: { ...process.env, NO_COLOR: '1' } });
      let stdout = '', stderr = '';
      p.stdout.on('data', (d) => (stdout += d));
      p.stderr.on('data', (d) => (stderr += d));
      p.on('close', (code) => resolve({ code, stdout, stderr }));
    });
  it('exit 0 with JSON on stdout; exit 2 with exactly one error line and no stack trace', async () => {
    const [ok, missing, notTiff] = await Promise.all([
      proc(['--image', fx('u8.tif'), '--channels', '1,2', '--json']),
      proc(['--ch1', join(tmp, 'missing.tif'), '--ch2', fx('u8.tif')]),
      proc(['--image', fx('rois.json'), '--channels', '1,2']),
    ]);
    expect(ok.code).toBe(0);
    expect(JSON.parse(ok.stdout).regions[0].pixels).toBe(1920);
    for (const r of [missing, notTiff]) {
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr).toMatch(/^error: [^\n]+\n$/);
      expect(r.stderr).not.toMatch(/\bat .*\.(ts|js):\d+/);
    }
  }, 60000);

  it('--help and -h print the usage on stdout and exit 0 (even next to other options)', async () => {
    const runs = await Promise.all([proc(['--help']), proc(['-h']), proc(['--ch1', 'x.tif', '-h'])]);
    for (const r of runs) {
      expect(r.code).toBe(0);
      expect(r.stderr).toBe('');
      expect(r.stdout).toBe(HELP + '\n');
    }
    expect(HELP.split('\n')[0]).toMatch(/^usage: npm run -s analyze -- /);
    for (const flag of ['--ch1', '--ch2', '--image', '--channels', '--mask', '--rois', '--threshold', '--t1', '--t2', '--json', '--help']) expect(HELP, flag).toContain(flag);
  }, 60000);
});
