/**
 * The `analyze` command contract: JSON shape and values, exit codes, and one `error:` line for
 * each kind of bad input. Values are checked against the reference fixtures (SciPy, R energy; see
 * tests/fixtures/analysis/generate.py). Most cases call `main()` in-process (fast); a few spawn
 * `npm run -s analyze` to check the real exit code and that no stack trace reaches stderr.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync, mkdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { HELP } from '../../server/cli/analyze';
import { captureAnalyze } from './capture';
import { measureObjects, OBJECT_RESULT_KEYS, REGION_RESULT_KEYS, type ObjectResult } from '../../shared/analysis/index';
import { writeTiffU16 } from '../images/tiffwrite';

const root = fileURLToPath(new URL('../../', import.meta.url));
const fx = (f: string) => join(root, 'tests/fixtures/analysis', f);
const expected = JSON.parse(readFileSync(fx('expected.json'), 'utf8'));
const u8 = expected.cases.find((c: { name: string }) => c.name === 'u8');
const tmp = mkdtempSync(join(tmpdir(), 'syntopy-cli-'));

const { run } = captureAnalyze();

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
  it('--mic: "micE" and "ticE" in each region, equal to R minerva (tests/fixtures/mic); absent without it', async () => {
    const mine = JSON.parse(readFileSync(join(root, 'tests/fixtures/mic/expected.json'), 'utf8')).cases.filter((c: { case: string; source: string }) => c.source === 'analysis' && c.case === 'u8');
    const r = await run('--ch1', fx('u8_ch1.tif'), '--ch2', fx('u8_ch2.tif'), '--mask', fx('labels.tif'), '--mic', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    for (const reg of j.regions) {
      const ref = mine.find((c: { label: number }) => c.label === reg.label);
      expect(Math.abs(reg.micE - ref.micE), `${reg.label}.micE`).toBeLessThanOrEqual(1e-6);
      expect(Math.abs(reg.ticE - ref.ticE), `${reg.label}.ticE`).toBeLessThanOrEqual(1e-6);
    }
    const table = await run('--ch1', fx('u8_ch1.tif'), '--ch2', fx('u8_ch2.tif'), '--mic');
    expect(table.out.split('\n')[1].split(/\s+/)).toEqual(expect.arrayContaining(['MICe', 'TICe']));
    const off = await run('--ch1', fx('u8_ch1.tif'), '--ch2', fx('u8_ch2.tif'), '--json');
    expect(Object.keys(JSON.parse(off.out).regions[0])).not.toEqual(expect.arrayContaining(['micE']));
    expect(Object.keys(JSON.parse(off.out).regions[0])).not.toContain('ticE');
    expect((await run('--ch1', fx('u8_ch1.tif'), '--ch2', fx('u8_ch2.tif'))).out).not.toMatch(/MICe/);
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
      const r = await run('--image', fx(f), '--channels', '1,2', '--json');
      expect(r.code).toBe(0);
      return JSON.parse(r.out).regions[0];
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
  it('a negative value after an option is its value (--t1 -5), in either spelling', async () => {
    const a = await run('--image', fx('u8.tif'), '--channels', '1,2', '--threshold', 'manual', '--t1', '-5', '--t2', '-0.5', '--json');
    expect(a.code, a.err).toBe(0);
    expect(JSON.parse(a.out).thresholds).toEqual({ method: 'manual', ch1: -5, ch2: -0.5 });
    const b = await run('--image', fx('u8.tif'), '--channels', '1,2', '--threshold', 'manual', '--t1=-5', '--t2=-0.5', '--json');
    expect(b.out).toBe(a.out);
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
    // a negative value is a value, not an option: it reaches the option's own check
    await bad(['--image', fx('u8.tif'), '--channels', '1,2', '--threshold', 'manual', '--t1', '-1e', '--t2', '3'], /--t1 must be a number, received "-1e"/);
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

const proc = (args: string[]) =>
  new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) => {
    const p = spawn('npm', ['run', '-s', 'analyze', '--', ...args], { cwd: root, env: { ...process.env, NO_COLOR: '1' } });
    let stdout = '', stderr = '';
    p.stdout.on('data', (d) => (stdout += d));
    p.stderr.on('data', (d) => (stderr += d));
    p.on('close', (code) => resolve({ code, stdout, stderr }));
  });

describe('analyze as a process (npm run -s analyze)', () => {
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
    for (const flag of ['--ch1', '--ch2', '--image', '--channels', '--mask', '--rois', '--threshold', '--t1', '--t2', '--json', '--help'])
      expect(HELP, flag).toContain(flag);
    for (const flag of ['--objects', '--spot-sigma PX', '--spot-k K', '--pair-distance PX', '--placements N', '--seed S']) {
      expect(HELP.split('\n')[0], flag).toContain(flag);
      expect(HELP.split('\n').filter((l) => l.trimStart().startsWith(flag)), flag).toHaveLength(1);
    }
  }, 60000);
});

/*
 * --objects on a synthetic field with known spots: an 80 × 48 16-bit pair, background 100 with seeded
 * Gaussian noise (sd 4), spots sampled at pixel centres from Gaussians of σ 1.5 px and amplitude 400 (SNR far
 * above 5). Left half (label 1): 4 channel-1 spots, 3 channel-2 partners at offset (1, 0.5) (1.12 px) and one
 * lone channel-2 spot; right half (label 2): 3 channel-1 spots, one partner at (0.6, −0.8) (1 px) and one
 * lone channel-2 spot. Every other spot is ≥ 10 px from any spot of the other channel, so at the default pair
 * distance of 2 px the expected measures follow from the layout.
 */
describe('analyze --objects', () => {
  const W = 80, H = 48, SIGMA = 1.5;
  const truth1: [number, number][] = [[8.5, 10.5], [25.3, 12.7], [12.2, 32.4], [30.6, 36.1], [50.5, 10.5], [68.4, 14.2], [56.7, 34.8]];
  const truth2: [number, number][] = [[9.5, 11], [26.3, 13.2], [13.2, 32.9], [30.5, 22.5], [51.1, 9.7], [72.5, 36.5]];
  function field(spots: [number, number][], seed: number): Uint16Array {
    let a = seed >>> 0;
    const uniform = () => {
      // mulberry32
      a = (a + 0x6d2b79f5) >>> 0;
      let t = a;
      t = Math.imul(t ^ (t >>> 15), t | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    const img = new Uint16Array(W * H);
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) {
        let v = 100 + 4 * Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
        for (const [cx, cy] of spots) v += 400 * Math.exp(-((x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2) / (2 * SIGMA * SIGMA));
        img[y * W + x] = Math.round(v);
      }
    return img;
  }
  const ch1 = field(truth1, 11), ch2 = field(truth2, 12);
  const labels = new Uint16Array(W * H);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) labels[y * W + x] = x < 40 ? 1 : 2;
  const dir = mkdtempSync(join(tmpdir(), 'syntopy-cli-objects-'));
  const f1 = join(dir, 'spots_ch1.tif'), f2 = join(dir, 'spots_ch2.tif'), fl = join(dir, 'halves.tif'), fr = join(dir, 'left.json');
  writeFileSync(f1, writeTiffU16([ch1], W, H));
  writeFileSync(f2, writeTiffU16([ch2], W, H));
  writeFileSync(fl, writeTiffU16([labels], W, H));
  // the left half as a polygon: pixel centres x + 0.5 < 40 are inside
  writeFileSync(fr, JSON.stringify([{ name: 'left', points: [[0, 0], [40, 0], [40, 48], [0, 48]] }]));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const indicesOf = (label: number) => Uint32Array.from(Array.from(labels.keys()).filter((i) => labels[i] === label));
  const DEFAULTS = { spotSigma: 1.5, spotK: 5, pairDistance: 2, placements: 999, seed: 1 };
  const base = ['--ch1', f1, '--ch2', f2];
  const json = async (...args: string[]) => {
    const r = await run(...base, ...args, '--json');
    expect(r.code, r.err).toBe(0);
    expect(r.err).toBe('');
    expect(r.out).not.toMatch(/NaN|Infinity/);
    return JSON.parse(r.out) as { objectSettings: typeof DEFAULTS; regions: { label: number | string; objects: ObjectResult }[] };
  };

  it('every region gets `objects` with exactly the contract keys, equal to measureObjects on the same data', async () => {
    const j = await json('--mask', fl, '--objects');
    expect(j.objectSettings).toEqual(DEFAULTS);
    expect(j.regions.map((r) => r.label)).toEqual([1, 2]);
    for (const reg of j.regions) {
      expect(Object.keys(reg.objects)).toEqual([...OBJECT_RESULT_KEYS]);
      expect(Object.keys(reg.objects)).toEqual(['count1', 'count2', 'paired1', 'paired2', 'mutualPairs', 'medianNearest1', 'medianNearest2', 'pValue', 'chanceFraction1', 'spots1', 'spots2']);
      expect(reg.objects).toEqual(measureObjects(ch1, ch2, W, H, indicesOf(reg.label as number), DEFAULTS));
      for (const s of [...reg.objects.spots1, ...reg.objects.spots2]) {
        expect(s).toHaveLength(2);
        // inside the region: the pixel under the centre carries the region's label
        expect(labels[Math.floor(s[1]) * W + Math.floor(s[0])], JSON.stringify(s)).toBe(reg.label);
      }
    }
    // the coefficient keys are still all there, beside `objects`
    for (const k of REGION_RESULT_KEYS) expect(j.regions[0], k).toHaveProperty(k);
  });

  it('known spots: counts, paired fractions, mutual pairs and centres (origin at the corner of pixel (0, 0))', async () => {
    const j = await json('--mask', fl, '--objects');
    const [left, right] = j.regions.map((r) => r.objects);
    expect([left.count1, left.count2, left.paired1, left.paired2, left.mutualPairs]).toEqual([4, 4, 3 / 4, 3 / 4, 3]);
    expect([right.count1, right.count2, right.paired1, right.paired2, right.mutualPairs]).toEqual([3, 2, 1 / 3, 1 / 2, 1]);
    // each detected centre within 0.05 px of a true centre, one to one (so a pixel's centre is at +0.5)
    const near = (found: [number, number][], truth: [number, number][]) => {
      const used = new Set<number>();
      for (const [x, y] of found) {
        const k = truth.findIndex((t, i) => !used.has(i) && Math.hypot(t[0] - x, t[1] - y) <= 0.05);
        expect(k, `spot (${x}, ${y})`).toBeGreaterThanOrEqual(0);
        used.add(k);
      }
    };
    near([...left.spots1, ...right.spots1], truth1);
    near([...left.spots2, ...right.spots2], truth2);
    // the nearest partner of a paired spot is at the layout's offset; 3 of 4 left spots paired at 1.12 px
    // gives a median nearest distance of 1.12 in channel 1 of the left half
    expect(left.medianNearest1!).toBeCloseTo(Math.hypot(1, 0.5), 1);
    // the partners are far closer than chance: the smallest p a 999-placement test can give
    expect(left.pValue).toBeCloseTo(1 / 1000, 12);
    expect(left.chanceFraction1!).toBeLessThan(0.2);
  });

  it('the whole image (no regions) and a polygon ROI give the same as measureObjects on those pixels', async () => {
    const whole = await json('--objects');
    expect(whole.regions).toHaveLength(1);
    expect(whole.regions[0].objects).toEqual(measureObjects(ch1, ch2, W, H, null, DEFAULTS));
    expect([whole.regions[0].objects.count1, whole.regions[0].objects.count2, whole.regions[0].objects.mutualPairs]).toEqual([7, 6, 4]);
    const roi = await json('--rois', fr, '--objects');
    expect(roi.regions[0].label).toBe('left');
    expect(roi.regions[0].objects).toEqual(measureObjects(ch1, ch2, W, H, indicesOf(1), DEFAULTS));
  });

  it('defaults are applied, and each option reaches the engine', async () => {
    const implicit = await json('--mask', fl, '--objects');
    const explicit = await json('--mask', fl, '--objects', '--spot-sigma', '1.5', '--spot-k', '5', '--pair-distance', '2', '--placements', '999', '--seed', '1');
    expect(explicit).toEqual(implicit);
    const given = { spotSigma: 1.25, spotK: 7, pairDistance: 0.5, placements: 19, seed: 42 };
    const j = await json('--mask', fl, '--objects', '--spot-sigma', '1.25', '--spot-k', '7', '--pair-distance', '0.5', '--placements', '19', '--seed', '42');
    expect(j.objectSettings).toEqual(given);
    for (const reg of j.regions) expect(reg.objects).toEqual(measureObjects(ch1, ch2, W, H, indicesOf(reg.label as number), given));
    // at 0.5 px no spot has a partner; 19 placements cannot give p below 1/20
    expect(j.regions[0].objects.paired1).toBe(0);
    const p = await json('--mask', fl, '--objects', '--placements', '19');
    expect(p.regions[0].objects.pValue).toBeCloseTo(1 / 20, 12);
    // the seed drives the placements: another seed, another chance fraction (same observed measures)
    const s7 = await json('--mask', fl, '--objects', '--seed', '7');
    expect(s7.regions[0].objects.chanceFraction1).not.toBe(implicit.regions[0].objects.chanceFraction1);
    expect(s7.regions[0].objects.paired1).toBe(implicit.regions[0].objects.paired1);
  });

  it('no spots found: counts 0, undefined measures null (not NaN), empty spot lists', async () => {
    const j = await json('--mask', fl, '--objects', '--spot-k', '1e6');
    for (const reg of j.regions)
      expect(reg.objects).toEqual({ count1: 0, count2: 0, paired1: null, paired2: null, mutualPairs: 0, medianNearest1: null, medianNearest2: null, pValue: null, chanceFraction1: null, spots1: [], spots2: [] });
  });

  it('without --objects: no `objects` and no `objectSettings` (the JSON is unchanged)', async () => {
    const r = await run(...base, '--mask', fl, '--json');
    const j = JSON.parse(r.out);
    expect(j).not.toHaveProperty('objectSettings');
    for (const reg of j.regions) expect(reg).not.toHaveProperty('objects');
  });

  it('the table gains an objects section: settings, counts, paired fractions, p', async () => {
    const r = await run(...base, '--mask', fl, '--objects');
    expect(r.code).toBe(0);
    const lines = r.out.trim().split('\n');
    const at = lines.findIndex((l) => l.startsWith('objects · '));
    expect(at).toBe(5); // header, column row, 2 regions, blank line
    expect(lines[at]).toBe('objects · spot σ 1.5 px, k 5, pair distance 2 px, 999 placements, seed 1');
    expect(lines[at + 1].split(/\s+/)).toEqual(['region', 'spots1', 'spots2', 'paired1', 'paired2', 'mutual', 'chance1', 'p']);
    expect(lines[at + 2].split(/\s+/).slice(0, 6)).toEqual(['1', '4', '4', '0.7500', '0.7500', '3']);
    expect(lines[at + 2].split(/\s+/)[7]).toBe('0.001');
    expect(lines[at + 3].split(/\s+/).slice(0, 6)).toEqual(['2', '3', '2', '0.3333', '0.5000', '1']);
    expect(lines).toHaveLength(at + 4);
    const none = await run(...base, '--mask', fl, '--objects', '--spot-k', '1e6');
    expect(none.out.trim().split('\n').at(-1)!.split(/\s+/)).toEqual(['2', '0', '0', 'n/a', 'n/a', '0', 'n/a', 'n/a']);
  });

  describe('bad object options → exit 2 and one error line quoting the value', () => {
    const bad = async (args: string[], pattern: RegExp) => {
      const r = await run(...base, ...args);
      expect(r.code, r.err).toBe(2);
      expect(r.out).toBe('');
      expect(r.err).toMatch(/^error: [^\n]+\n$/);
      expect(r.err).toMatch(pattern);
    };
    it('--spot-sigma', async () => {
      await bad(['--objects', '--spot-sigma', 'wide'], /--spot-sigma must be a number, received "wide"/);
      await bad(['--objects', '--spot-sigma', ''], /--spot-sigma must be a number, received ""/);
      await bad(['--objects', '--spot-sigma', 'NaN'], /--spot-sigma must be a number, received "NaN"/);
      await bad(['--objects', '--spot-sigma', '0'], /--spot-sigma must be a number of pixels in \(0, 50\], received "0"/);
      await bad(['--objects', '--spot-sigma', '-1.5'], /--spot-sigma .*received "-1.5"/);
      await bad(['--objects', '--spot-sigma', '51'], /--spot-sigma .*\(0, 50\], received "51"/);
    });
    it('--spot-k', async () => {
      await bad(['--objects', '--spot-k', 'five'], /--spot-k must be a number, received "five"/);
      await bad(['--objects', '--spot-k', '0'], /--spot-k must be a positive number, received "0"/);
      await bad(['--objects', '--spot-k', '-3'], /--spot-k must be a positive number, received "-3"/);
      await bad(['--objects', '--spot-k', 'Infinity'], /--spot-k must be a number, received "Infinity"/);
    });
    it('--pair-distance', async () => {
      await bad(['--objects', '--pair-distance', '2px'], /--pair-distance must be a number, received "2px"/);
      await bad(['--objects', '--pair-distance', '-0.1'], /--pair-distance must be a non-negative number of pixels, received "-0.1"/);
    });
    it('--placements', async () => {
      await bad(['--objects', '--placements', 'many'], /--placements must be a number, received "many"/);
      await bad(['--objects', '--placements', '0'], /--placements must be a whole number from 1 to 1000000, received "0"/);
      await bad(['--objects', '--placements', '99.5'], /received "99.5"/);
      await bad(['--objects', '--placements', '-5'], /received "-5"/);
      await bad(['--objects', '--placements', '1e7'], /received "1e7"/);
    });
    it('--seed', async () => {
      await bad(['--objects', '--seed', 'lucky'], /--seed must be a number, received "lucky"/);
      await bad(['--objects', '--seed', '-1'], /--seed must be a whole number from 0 to 4294967295, received "-1"/);
      await bad(['--objects', '--seed', '1.5'], /received "1.5"/);
      await bad(['--objects', '--seed', '4294967296'], /received "4294967296"/);
    });
    it('a spot option without --objects is an error, naming the options given', async () => {
      await bad(['--spot-k', '3'], /--spot-k applies to --objects only/);
      await bad(['--seed', '3', '--placements', '9'], /--placements, --seed apply to --objects only/);
      await bad(['--spot-sigma', '2', '--pair-distance', '1', '--spot-k', '4'], /--spot-sigma, --spot-k, --pair-distance apply to --objects only/);
    });
    it('--objects on a z-stack that states no voxel size, without --z-step', async () => {
      const r = await run('--image', join(root, 'tests/fixtures/images/ome_zstack.ome.tif'), '--channels', '1,2', '--objects');
      expect(r.code, r.err).toBe(2);
      expect(r.out).toBe('');
      expect(r.err).toMatch(/^error: --objects in 3D \(\d+ z slices\) needs the slice spacing: give --z-step[^\n]*\n$/);
    });
    it('--z-step', async () => {
      await bad(['--objects', '--z-step', '0'], /--z-step must be the slice spacing in pixel widths .*received "0"/);
      await bad(['--objects', '--z-step', 'deep'], /--z-step must be a number, received "deep"/);
      await bad(['--z-step', '2'], /--z-step applies to --objects only/);
    });
  });

  it('as a process: JSON with `objects` on stdout (exit 0); a bad value exits 2 with one line, no stack trace', async () => {
    const [ok, badK] = await Promise.all([proc([...base, '--mask', fl, '--objects', '--json']), proc([...base, '--objects', '--spot-k', '-1'])]);
    expect(ok.code, ok.stderr).toBe(0);
    const j = JSON.parse(ok.stdout);
    expect(j.regions[0].objects).toEqual(measureObjects(ch1, ch2, W, H, indicesOf(1), DEFAULTS));
    expect(badK.code).toBe(2);
    expect(badK.stdout).toBe('');
    expect(badK.stderr).toBe('error: --spot-k must be a positive number, received "-1"\n');
  }, 60000);
});
