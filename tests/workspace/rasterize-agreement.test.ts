/**
 * What is drawn is what is measured: outlines made by the workspace's tools go through one function
 * (cellIndices → shared/analysis/rasterize.ts) in the browser scatter/preview, in the server's pixelCount and
 * in the engine's measureRegion. Checked against the definition (pixel-centre even-odd rule, PRODUCT.md)
 * evaluated independently by brute force.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { insertField } from './helpers.js';
import { boxFromDrag, ellipseFromDrag, traceFromStroke, polygonFromClicks } from '../../src/features/workspace/lib/draw';
import { initialOutlineState, outlineReducer } from '../../src/features/workspace/lib/outlineState';
import { prepareRegion, scatter, livePreview } from '../../src/features/workspace/lib/scatterCore';
import { measureRegion, rasterize } from '../../shared/analysis/index';
import { cellIndices, type CellGeometry } from '../../shared/schemas/cells';

const W = 64, H = 48;

/** The rule written out directly: centre (x+.5, y+.5) inside by crossing parity; ellipse by its equation. */
function bruteForce(g: CellGeometry): number {
  let n = 0;
  for (let y = 0; y < H; y++)
    for (let x = 0; x < W; x++) {
      const px = x + 0.5, py = y + 0.5;
      let inside = false;
      if (g.kind === 'ellipse') inside = ((px - g.cx) / g.rx) ** 2 + ((py - g.cy) / g.ry) ** 2 <= 1;
      else if (g.kind === 'rect') inside = px > g.x && px <= g.x + g.width && py > g.y && py <= g.y + g.height;
      else if (g.kind === 'polygon' || g.kind === 'freehand') {
        const p = g.points;
        for (let i = 0, j = p.length - 1; i < p.length; j = i++) {
          const [xi, yi] = p[i], [xj, yj] = p[j];
          if (yi > py !== yj > py && px > xi + ((py - yi) * (xj - xi)) / (yj - yi)) inside = !inside;
        }
      }
      if (inside) n++;
    }
  return n;
}

// outlines as the tools make them (fractional coordinates, as mouse positions in image space are)
const stroke: [number, number][] = Array.from({ length: 120 }, (_, k) => {
  const a = (k / 120) * 2 * Math.PI;
  return [32 + (14 + 4 * Math.sin(5 * a)) * Math.cos(a), 24 + (12 + 3 * Math.cos(3 * a)) * Math.sin(a)];
});
let edited = initialOutlineState();
edited = outlineReducer(edited, { type: 'add', geometry: polygonFromClicks([[5.3, 5.1], [30.7, 8.2], [20.2, 30.9], [8.8, 22.4]])! });
edited = outlineReducer(edited, { type: 'insert-vertex', key: 'n1', index: 2, at: [35.25, 25.75] });
edited = outlineReducer(edited, { type: 'move-handle', key: 'n1', index: 0, to: [2.5, 2.5] });
const shapes: [string, CellGeometry][] = [
  ['box', boxFromDrag([10.2, 12.7], [3.4, 30.1])!],
  ['oval', ellipseFromDrag([20.3, 10.6], [50.9, 40.2])!],
  ['freehand', traceFromStroke(stroke, 1.5)!],
  ['polygon after vertex edits', edited.outlines[0].geometry],
  ['self-intersecting polygon (even-odd)', polygonFromClicks([[5, 5], [40, 40], [40, 5], [5, 40]])!],
  ['polygon vertex on pixel centres', polygonFromClicks([[10.5, 10.5], [20.5, 10.5], [20.5, 20.5], [10.5, 20.5]])!],
];

let t: TestApp;
let fieldId: number;
beforeAll(async () => {
  t = await makeTestApp();
  fieldId = insertField(t.ctx, t.world.coverslipA, W, H).id;
});
afterAll(() => t.close());

describe('one rasterization rule: tools → browser scatter → engine → server', () => {
  const ch1 = new Uint16Array(W * H).map((_, i) => (i * 7919) % 4096);
  const ch2 = new Uint16Array(W * H).map((_, i) => (i * 104729) % 4001);
  for (const [name, g] of shapes) {
    it(name, async () => {
      const ref = bruteForce(g);
      expect(ref).toBeGreaterThan(0);
      const idx = cellIndices(g, W, H);
      expect(idx.length).toBe(ref);
      // the browser's scatter and live preview (the worker's code)
      const region = prepareRegion({ width: W, height: H, ch1, ch2 }, g);
      expect(region.n).toBe(ref);
      const s = scatter(region, 1000, 1000);
      expect(s.quadrants.both + s.quadrants.only1 + s.quadrants.only2 + s.quadrants.neither).toBe(ref);
      const live = livePreview(region, 1000, 1000);
      // the engine on the mask the server's rasterizer makes: identical numbers
      const shape = g.kind === 'ellipse' ? { kind: 'ellipse' as const, cx: g.cx, cy: g.cy, rx: g.rx, ry: g.ry } : g.kind === 'rect' ? { kind: 'rectangle' as const, x: g.x, y: g.y, width: g.width, height: g.height } : { kind: 'polygon' as const, points: (g as { points: [number, number][] }).points };
      const engine = measureRegion(ch1, ch2, rasterize(shape, W, H), { threshold: { method: 'manual', t1: 1000, t2: 1000 } });
      expect(engine.pixels).toBe(ref);
      expect(live.pearson).toBe(engine.pearson);
      expect(live.mandersM1).toBe(engine.mandersM1);
      expect(live.kendallTauB).toBe(engine.kendallTauB);
      // the server stores the same count
      if (g.kind !== 'label') {
        const a = await t.login('microscopist');
        const res = await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: g });
        expect(res.status).toBe(201);
        expect(res.body.cell.pixelCount).toBe(ref);
      }
    });
  }
});
