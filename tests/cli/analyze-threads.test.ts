/**
 * `analyze --threads`: a region of more than THREAD_MIN_PAIRS pixels (a 1024 × 1040 16-bit stack of two
 * slices, measured in 3D) gives the same JSON with one thread and with helpers; a bad value is refused
 * quoting it.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Xoshiro128 } from '../../shared/analysis/index';
import { THREAD_MIN_PAIRS } from '../../server/analysis/sweep-threads';
import { writeTiffU16 } from '../images/tiffwrite';
import { captureAnalyze } from './capture';

const { run, json } = captureAnalyze();
const dir = mkdtempSync(join(tmpdir(), 'syntopy-threads-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const W = 1024, H = 520, Z = 2;
function stacks(): [string, string] {
  const rng = new Xoshiro128(21);
  const a: Uint16Array[] = [], b: Uint16Array[] = [];
  for (let z = 0; z < Z; z++) {
    const sa = new Uint16Array(W * H), sb = new Uint16Array(W * H);
    for (let i = 0; i < W * H; i++) {
      const c = rng.nextFloat() ** 4;
      sa[i] = Math.round(200 + 30000 * c + 400 * rng.nextFloat());
      sb[i] = Math.round(150 + 20000 * c + 9000 * rng.nextFloat() ** 3 + 600 * rng.nextFloat());
    }
    a.push(sa);
    b.push(sb);
  }
  const f1 = join(dir, 'a.tif'), f2 = join(dir, 'b.tif');
  writeFileSync(f1, writeTiffU16(a, W, H));
  writeFileSync(f2, writeTiffU16(b, W, H));
  return [f1, f2];
}

describe('analyze --threads', () => {
  it('one thread and helper threads give the same values on a region above the threading size', async () => {
    expect(W * H * Z).toBeGreaterThanOrEqual(THREAD_MIN_PAIRS);
    const [f1, f2] = stacks();
    const one = await json('--ch1', f1, '--ch2', f2, '--threads', '1');
    const three = await json('--ch1', f1, '--ch2', f2, '--threads', '3');
    expect(three).toEqual(one);
    expect(one.depth).toBe(2);
    expect(one.regions[0].pixels).toBe(W * H * Z);
    expect(one.regions[0].kendallTauB).toBeGreaterThan(0.1);
  }, 120_000);

  it('refuses a bad --threads value, quoting it', async () => {
    for (const v of ['0', '65', '1.5', 'two']) {
      const r = await run('--ch1', 'a.tif', '--ch2', 'b.tif', '--threads', v);
      expect(r.code).toBe(2);
      expect(r.err).toBe(`error: --threads must be a whole number from 1 to 64, received "${v}"\n`);
    }
  });
});
