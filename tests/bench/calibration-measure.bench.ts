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
import { measureFieldShift } from '../../server/images/calibration-measure';
import { beadField } from './bead-field';
import { fmt } from './timing';

const S = Number(process.argv[2] ?? 2048);
const N = Math.round((2000 * S * S) / (2048 * 2048));
const DX = 2.37, DY = -1.62;

/** the bead field of tests/bench/bead-field.ts at this size */
const beads = (dx: number, dy: number) => beadField(S, dx, dy);

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
