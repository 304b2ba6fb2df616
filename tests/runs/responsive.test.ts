/**
 * While a run on a 2048 × 2048 field is working in the worker pool, the web server keeps answering:
 * /api/health and a study page within 100 ms (the bound is the product's target, no outside source).
 * Measured against an idle baseline of the same requests, because CI machines are shared.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { addField, syntheticPair } from './helpers.js';

let t: TestApp;
const N = 2048;

beforeAll(async () => {
  t = await makeTestApp({ WORKERS: '1' });
  const [ch1, ch2] = syntheticPair(N, N, 5);
  await addField(t.ctx, t.world.coverslipA, {
    name: 'Big',
    width: N,
    height: N,
    ch1,
    ch2,
    // a large cell and a whole-field box: the full coefficient set over 5.2 M pixels
    cells: [
      { geometry: { kind: 'ellipse', cx: 512, cy: 1536, rx: 500, ry: 500 } },
      { geometry: { kind: 'rect', x: 0, y: 0, width: 2048, height: 2048 } },
    ],
  });
}, 120_000);
afterAll(() => t.close());

describe('responsiveness during a run', () => {
  it('health and a study page answer within 100 ms while a 2048² field is computed', async () => {
    const mic = await t.login('microscopist');
    const mgr = await t.login('manager');
    const r = (await mic.post('/api/recipes').send({ name: 'Big', settings: { threshold: { method: 'costes' } } })).body;
    await mic.post(`/api/recipes/${r.id}/submit`);
    await mgr.post(`/api/recipes/${r.id}/approve`);
    // warm both routes (first-request module work is not what is measured)
    await mic.get('/api/health');
    await mic.get(`/api/studies/${t.world.studyA}`);
    // the same requests with no run, to see what the machine itself does (other processes share the CPU)
    const idleH: number[] = [];
    const idleS: number[] = [];
    for (let i = 0; i < 40; i++) {
      let s = performance.now();
      await mic.get('/api/health');
      idleH.push(performance.now() - s);
      s = performance.now();
      await mic.get(`/api/studies/${t.world.studyA}`);
      idleS.push(performance.now() - s);
      await new Promise((res) => setTimeout(res, 20));
    }
    const run = (await mic.post('/api/runs').send({ recipeId: r.id, scope: { kind: 'field', id: 1 } })).body;
    const health: number[] = [];
    const study: number[] = [];
    let status = 'queued';
    let polls = 0;
    const t0 = Date.now();
    while (status === 'queued' || status === 'running') {
      let s = performance.now();
      const h = await mic.get('/api/health');
      health.push(performance.now() - s);
      expect(h.status).toBe(200);
      s = performance.now();
      const st = await mic.get(`/api/studies/${t.world.studyA}`);
      study.push(performance.now() - s);
      expect(st.status).toBeLessThan(500);
      status = (await mic.get(`/api/runs/${run.id}`)).body.status;
      polls++;
      await new Promise((res) => setTimeout(res, 20));
      if (Date.now() - t0 > 120_000) throw new Error('run took over 2 minutes');
    }
    const elapsed = Date.now() - t0;
    expect(status).toBe('done');
    expect(polls).toBeGreaterThan(5);
    const max = (a: number[]) => Math.max(...a);
    const pct = (a: number[], q: number) => [...a].sort((x, y) => x - y)[Math.min(a.length - 1, Math.floor(a.length * q))];
    const worst = (a: number[]) => a.map((v, i) => [i, Math.round(v)]).sort((x, y) => y[1] - x[1]).slice(0, 5).map(([i, v]) => `#${i}:${v}`).join(' ');
    console.log(`[responsive] idle (no run): health p50 ${pct(idleH, 0.5).toFixed(1)} p90 ${pct(idleH, 0.9).toFixed(1)} max ${max(idleH).toFixed(1)} ms; study p50 ${pct(idleS, 0.5).toFixed(1)} p90 ${pct(idleS, 0.9).toFixed(1)} max ${max(idleS).toFixed(1)} ms`);
    console.log(`[responsive] during the run (${elapsed} ms, ${polls} polls): health p50 ${pct(health, 0.5).toFixed(1)} p90 ${pct(health, 0.9).toFixed(1)} max ${max(health).toFixed(1)} ms (${worst(health)}); study p50 ${pct(study, 0.5).toFixed(1)} p90 ${pct(study, 0.9).toFixed(1)} max ${max(study).toFixed(1)} ms (${worst(study)})`);
    // The typical request answers within 100 ms while the field is computed. The tail is held to 100 ms
    // only when the machine itself is quiet: on a shared CI box other processes alone push single requests
    // past 100 ms with no run at all (the idle line shows it).
    expect(pct(health, 0.5)).toBeLessThan(100);
    expect(pct(study, 0.5)).toBeLessThan(100);
    const quiet = pct(idleH, 0.9) < 30 && pct(idleS, 0.9) < 50;
    if (quiet) {
      expect(pct(health, 0.9)).toBeLessThan(100);
      expect(pct(study, 0.9)).toBeLessThan(100);
    } else console.warn('[responsive] the machine is busy without a run; 90th percentiles reported, not asserted');
  }, 180_000);
});
