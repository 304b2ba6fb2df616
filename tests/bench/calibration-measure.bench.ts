/**
 * Measuring a calibration through the API (issue 15): `POST /api/calibrations/:id/measure-shift` on a stored
 * bead field (default 2048 × 2048, 16-bit) runs in a decoding thread. Printed against baselines measured in the
 * same run:
 *  (a) the same decode + shift + curves done directly in this thread (what the route would cost the web
 *      thread if it measured in place), CPU time, against the whole process's CPU time while the route measures
 *      (the decoding thread included: process.cpuUsage counts every thread);
 *  (b) the web thread's event-loop utilisation and largest event-loop delay while the route measures, against
 *      the same figures over an idle stretch of the same length.
 * Run: `npm run bench` (BENCH=calibration-measure) or `npx tsx tests/bench/calibration-measure.bench.ts [size]`.
 */
import { monitorEventLoopDelay, performance } from 'node:perf_hooks';
import { makeTestApp } from '../utils/app';
import { tiff16 } from '../runs/helpers';
import { Xoshiro128 } from '../../shared/analysis/prng';
import { measureFieldShift } from '../../server/images/calibration-measure';
import { fmt } from './timing';

const S = Number(process.argv[2] ?? 2048);
const N = Math.round((2000 * S * S) / (2048 * 2048));
const DX = 2.37, DY = -1.62;

function beads(dx: number, dy: number): Uint16Array {
  const rng = new Xoshiro128(7);
  const noise = new Xoshiro128(dx === 0 ? 1 : 2);
  const f = new Float32Array(S * S);
  for (let i = 0; i < f.length; i++) f[i] = 200 + 30 * (noise.nextFloat() + noise.nextFloat() + noise.nextFloat() - 1.5);
  for (let k = 0; k < N; k++) {
    const cx = 4 + rng.nextFloat() * (S - 8) + dx, cy = 4 + rng.nextFloat() * (S - 8) + dy, a = 300 + 900 * rng.nextFloat();
    for (let y = Math.max(0, Math.floor(cy - 7)); y < Math.min(S, cy + 7); y++)
      for (let x = Math.max(0, Math.floor(cx - 7)); x < Math.min(S, cx + 7); x++) f[y * S + x] += a * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / 4.5);
  }
  return Uint16Array.from(f, (v) => Math.min(65535, Math.round(v)));
}

const t = await makeTestApp();
try {
  const bytes = tiff16(S, S, [beads(0, 0), beads(DX, DY)]);
  const mic = await t.login('microscopist');
  const fm = await t.login('manager');
  const up = await mic.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', bytes, { filename: 'beads.tif', contentType: 'image/tiff' });
  if (up.status !== 201) throw new Error(`upload: ${up.status} ${JSON.stringify(up.body)}`);
  const fieldId = up.body.results[0].field.id as number;
  const inst = (await fm.post('/api/instruments').send({ name: 'Bench stand', channel1: 'a', channel2: 'b' })).body.id as number;
  const draft = (await fm.post(`/api/instruments/${inst}/calibrations`).send({})).body.id as number;

  // (a) in this thread: decode + measure + curves, as the worker does it
  const u8 = new Uint8Array(bytes);
  let inPlace = { wall: Infinity, cpu: Infinity };
  for (let r = 0; r < 2; r++) {
    const c0 = process.cpuUsage(), t0 = performance.now();
    await measureFieldShift({ name: 'beads', bytes1: u8, bytes2: null, channel1: 1, channel2: 2 }, 8, {});
    const c = process.cpuUsage(c0);
    inPlace = { wall: Math.min(inPlace.wall, performance.now() - t0), cpu: Math.min(inPlace.cpu, (c.user + c.system) / 1000) };
  }
  // warm the decoding thread (its first start imports the engine)
  await fm.post(`/api/calibrations/${draft}/measure-shift`).send({ fieldId });

  // (b) the web thread while the route measures, then idle for as long
  const h = monitorEventLoopDelay({ resolution: 5 });
  h.enable();
  const e0 = performance.eventLoopUtilization();
  const t0 = performance.now();
  const pc0 = process.cpuUsage();
  const res = await fm.post(`/api/calibrations/${draft}/measure-shift`).send({ fieldId });
  const routeWall = performance.now() - t0;
  // process-wide: the decoding thread's CPU plus the web thread's (store read, copies, the request itself)
  const pc = process.cpuUsage(pc0);
  const routeCpu = (pc.user + pc.system) / 1000;
  const busy = performance.eventLoopUtilization(e0);
  h.disable();
  const busyMax = h.max / 1e6;
  if (res.status !== 200) throw new Error(`measure: ${res.status} ${JSON.stringify(res.body)}`);
  const hi = monitorEventLoopDelay({ resolution: 5 });
  hi.enable();
  const i0 = performance.eventLoopUtilization();
  await new Promise((r) => setTimeout(r, routeWall));
  const idle = performance.eventLoopUtilization(i0);
  hi.disable();

  console.log(`${S}×${S}, ${N} beads, channel 2 displaced by (${DX}, ${DY}) px: measured (${res.body.dx}, ${res.body.dy})`);
  console.log(`(a) decode + shift + curves ±8 px in the web thread: ${fmt(inPlace)}`);
  console.log(`    through the route (decoding thread): ${routeWall.toFixed(1)} ms wall, ${routeCpu.toFixed(1)} ms CPU of the whole process = ${(routeCpu / inPlace.cpu).toFixed(2)}× the in-place CPU time`);
  console.log(`(b) web-thread event-loop utilisation while measuring ${(busy.utilization * 100).toFixed(1)} % (idle stretch ${(idle.utilization * 100).toFixed(1)} %; in place it would be 100 % for ${inPlace.wall.toFixed(0)} ms)`);
  console.log(`    largest event-loop delay while measuring ${busyMax.toFixed(1)} ms (idle stretch ${(hi.max / 1e6).toFixed(1)} ms)`);
} finally {
  await t.close();
}
