/**
 * Intake benchmark: upload (multipart over HTTP to a real listening server) + checks + decode + facts +
 * store + DB row, then the first (uncached) composite preview, for a 2048 × 2048 two-channel 16-bit file.
 * Reports wall times and peak RSS against the file size. Run alone: `npx tsx tests/bench/intake.bench.ts`
 * (prints JSON); tests/bench/run.ts may import `run()`.
 * Target: under one second; memory a small multiple of the file size.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import type { AddressInfo } from 'node:net';
import { makeTestApp } from '../utils/app.js';
import { writeTiffU16 } from '../images/tiffwrite.js';
import { clearPixelCache } from '../../server/images/intake.js';

export interface IntakeBenchResult {
  name: string;
  fileBytes: number;
  uploadMs: number;
  previewMs: number;
  totalMs: number;
  /** CPU time of this process (user + system) for upload + preview: robust when the machine is shared */
  cpuMs: number;
  loadAvg1: number;
  rssBeforeMB: number;
  peakRssMB: number;
  peakOverFile: number;
}

function synthetic(size: number) {
  const a = new Uint16Array(size * size);
  const b = new Uint16Array(size * size);
  let s = 12345;
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      s = (s * 1103515245 + 12345) >>> 0;
      const noise = s >>> 22; // 0..1023
      const blob = Math.exp(-(((x % 256) - 128) ** 2 + ((y % 256) - 128) ** 2) / 2000) * 30000;
      a[y * size + x] = Math.min(65535, 500 + blob + noise);
      b[y * size + x] = Math.min(65535, 800 + 0.6 * blob + ((noise * 7) & 1023));
    }
  }
  return [a, b];
}

/** Default: 512², 1024² and 2048² (the case), three uploads each; the first of all is a warm-up. */
export async function run(opts: { sizes?: number[]; repeats?: number } = {}): Promise<IntakeBenchResult[]> {
  const out: IntakeBenchResult[] = [];
  for (const size of opts.sizes ?? [512, 1024, 2048]) out.push(...(await runSize(size, opts.repeats ?? 3)));
  return out;
}

async function runSize(size: number, repeats: number): Promise<IntakeBenchResult[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-bench-'));
  const file = path.join(dir, `bench-${size}.tif`);
  fs.writeFileSync(file, writeTiffU16(synthetic(size), size, size));
  const fileBytes = fs.statSync(file).size;
  const t = await makeTestApp();
  const server = t.app.listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: t.world.users.microscopist.email, password: 'correct horse battery' }) });
  const cookie = (login.headers.get('set-cookie') ?? '').split(';')[0];
  const out: IntakeBenchResult[] = [];
  try {
    for (let i = 0; i < repeats; i++) {
      clearPixelCache();
      global.gc?.();
      const rssBefore = process.memoryUsage().rss;
      let peak = rssBefore;
      const timer = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 5);
      // each repeat uploads a different file (one changed byte) so nothing is deduplicated or cached
      const bytes = fs.readFileSync(file);
      bytes[bytes.length - 1] = i;
      const c0 = process.cpuUsage();
      const t0 = performance.now();
      const form = new FormData();
      form.append('files', new Blob([bytes]), `bench-${i}.tif`);
      const up = await fetch(`${base}/api/coverslips/${t.world.coverslipA}/fields`, { method: 'POST', headers: { cookie }, body: form });
      const body = (await up.json()) as { results: { field: { id: number } }[] };
      if (up.status !== 201) throw new Error(`upload failed: ${up.status} ${JSON.stringify(body)}`);
      const t1 = performance.now();
      const pv = await fetch(`${base}/api/fields/${body.results[0].field.id}/preview.png`, { headers: { cookie } });
      await pv.arrayBuffer();
      const t2 = performance.now();
      const c = process.cpuUsage(c0);
      clearInterval(timer);
      peak = Math.max(peak, process.memoryUsage().rss);
      out.push({
        name: `intake ${size}x${size}x2 uint16 (#${i + 1})`,
        fileBytes,
        uploadMs: +(t1 - t0).toFixed(1),
        previewMs: +(t2 - t1).toFixed(1),
        totalMs: +(t2 - t0).toFixed(1),
        cpuMs: +((c.user + c.system) / 1000).toFixed(1),
        loadAvg1: +os.loadavg()[0].toFixed(1),
        rssBeforeMB: +(rssBefore / 2 ** 20).toFixed(1),
        peakRssMB: +(peak / 2 ** 20).toFixed(1),
        peakOverFile: +((peak - rssBefore) / fileBytes).toFixed(2),
      });
    }
  } finally {
    server.close();
    await t.close();
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return out;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const sizes = process.env.BENCH_SIZE ? process.env.BENCH_SIZE.split(',').map(Number) : undefined;
  run({ sizes }).then((r) => {
    if (process.env.BENCH_JSON) console.log(JSON.stringify(r, null, 2));
    else {
      console.log('case                                  file MB  upload ms  preview ms  total ms  cpu ms  peak RSS MB (+over start, ×file)  load');
      for (const x of r) {
        console.log(
          `${x.name.padEnd(36)} ${(x.fileBytes / 2 ** 20).toFixed(1).padStart(7)} ${String(x.uploadMs).padStart(10)} ${String(x.previewMs).padStart(11)} ${String(x.totalMs).padStart(9)} ${String(x.cpuMs).padStart(7)}  ${String(x.peakRssMB).padStart(6)} (+${(x.peakRssMB - x.rssBeforeMB).toFixed(1)}, ×${x.peakOverFile})`.padEnd(118) + `  ${x.loadAvg1}`,
        );
      }
      const big = r.filter((x) => x.name.includes('2048x2048')).slice(1);
      if (big.length) {
        const med = [...big].sort((a, b) => a.totalMs - b.totalMs)[Math.floor(big.length / 2)];
        console.log(`2048² two-channel 16-bit, warm median: ${med.totalMs} ms wall (target < 1000), ${med.cpuMs} ms CPU`);
      }
    }
    process.exit(0);
  });
}
