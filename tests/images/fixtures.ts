/**
 * Mirror of the pixel formulas in tests/fixtures/images/generate.py (`value()`): the expected values of
 * every fixture, recomputed here so no expected-value file is committed. The fixtures themselves were
 * written by tifffile and libtiff's tiffcp (outside references).
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const FIXTURES = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures/images');
export const fixture = (name: string) => path.join(FIXTURES, name);

export interface FixtureRow {
  name: string;
  dtype: 'uint8' | 'uint16' | 'uint32' | 'float32' | 'bad';
  width: number;
  height: number;
  channels: number;
  sizeZ: number;
  notes: string;
}

export function manifest(): FixtureRow[] {
  const lines = fs.readFileSync(path.join(FIXTURES, 'fixtures.tsv'), 'utf8').trim().split('\n').slice(1);
  return lines.map((l) => {
    const [name, dtype, width, height, channels, sizeZ, notes] = l.split('\t');
    return { name, dtype: dtype as FixtureRow['dtype'], width: +width, height: +height, channels: +channels, sizeZ: +sizeZ, notes };
  });
}

/** value(dtype, c, z) at (x, y); c and z 0-based — same arithmetic as generate.py */
export function value(dtype: FixtureRow['dtype'], c: number, z: number, x: number, y: number): number {
  switch (dtype) {
    case 'uint8':
      return (x * 3 + y * 5 + c * 17 + z * 29) % 256;
    case 'uint16':
      return (x * 7 + y * 131 + c * 1009 + z * 4099 + ((x * y) % 13) * 4001) % 65536;
    case 'uint32':
      return (x * 65537 + y * 16777259 + c * 1000000007 + z * 7) >>> 0;
    case 'float32':
      return Math.fround((x - 20.5) * 0.37 + y * 1.25e-3 + c * 1000.5 + z * 0.125);
    default:
      throw new Error(`no formula for ${dtype}`);
  }
}

export function expectedPlane(dtype: FixtureRow['dtype'], c: number, z: number, w: number, h: number): number[] {
  const out = new Array<number>(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) out[y * w + x] = value(dtype, c, z, x, y);
  return out;
}
