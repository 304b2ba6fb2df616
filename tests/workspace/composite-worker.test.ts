/**
 * The pixel worker's 'composite' request (src/features/workspace/lib/scatter.worker.ts) is a 2-D view of one
 * slice. A worker that holds a whole volume (volume-begin) or one cell's voxels of a stack (stream-begin) has
 * no such picture: it answers with an error for that slot naming what it holds, never an image of the wrong
 * size; with one slice it draws that slice at its own size, exactly as renderComposite does. (our checks)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderComposite } from '@/features/workspace/lib/composite';
import type { ScatterReply, ScatterRequest } from '@/features/workspace/lib/scatter.worker';

const W = 12, H = 8, Z = 3;
const replies: ScatterReply[] = [];
let send: (m: ScatterRequest) => void;
const had = Object.getOwnPropertyDescriptor(globalThis, 'self');

beforeAll(async () => {
  // the worker module installs its handler on `self`; a stand-in collects what it posts
  const scope: { postMessage: (m: ScatterReply) => void; onmessage: ((e: { data: ScatterRequest }) => void) | null } = { postMessage: (m) => replies.push(m), onmessage: null };
  Object.defineProperty(globalThis, 'self', { value: scope, configurable: true, writable: true });
  await import('@/features/workspace/lib/scatter.worker');
  send = (m) => scope.onmessage!({ data: m });
});
afterAll(() => {
  if (had) Object.defineProperty(globalThis, 'self', had);
  else delete (globalThis as { self?: unknown }).self;
});

const slice = (z: number, c: number) => Uint16Array.from({ length: W * H }, (_, i) => (i * (c + 2) + 97 * z) % 1000);
const last = () => replies[replies.length - 1];

describe('the composite request of the pixel worker', () => {
  it('one slice: drawn at the slice size, the same bytes as renderComposite', () => {
    send({ type: 'pixels', width: W, height: H, ch1: slice(1, 0), ch2: slice(1, 1), saturationLevel: 65535 });
    send({ type: 'composite', seq: 1, slot: 'panel', shift: { dx: 1, dy: 0 } });
    const r = last();
    expect(r.type).toBe('composite');
    if (r.type !== 'composite') return;
    expect([r.width, r.height, r.rgba.length]).toEqual([W, H, W * H * 4]);
    expect(Array.from(r.rgba)).toEqual(Array.from(renderComposite({ width: W, height: H, ch1: slice(1, 0), ch2: slice(1, 1) }, { dx: 1, dy: 0 }).rgba));
  });

  it('a whole volume: refused for that slot, saying it holds the volume', () => {
    send({ type: 'volume-begin', width: W, height: H, depth: Z, saturationLevel: 65535 });
    for (let z = 0; z < Z; z++) send({ type: 'volume-slice', z, ch1: slice(z, 0), ch2: slice(z, 1) });
    // the volume is complete: a scatter request is answered over all its voxels
    send({ type: 'update', seq: 2, regionKey: 'volume:field', geometry: null, t1: 0, t2: 0, measure: false, cells: [] });
    const s = last();
    expect(s.type === 'scatter' && s.n).toBe(W * H * Z);
    send({ type: 'composite', seq: 3, slot: 'viewer', shift: null });
    expect(last()).toEqual({ type: 'error', seq: 3, composite: 'viewer', message: `The composite is drawn from one slice, but this view holds the whole volume (${Z} slices of ${W} × ${H} pixels).` });
  });

  it("one cell's voxels of a stack: refused, never a one-pixel-high strip", () => {
    send({ type: 'stream-begin', width: W, height: H, depth: Z, geometry: { kind: 'rect', x: 2, y: 1, width: 4, height: 3, z: [2, 3] }, saturationLevel: 65535, maxBytes: 1e6 });
    for (let z = 1; z < Z; z++) send({ type: 'volume-slice', z, ch1: slice(z, 0), ch2: slice(z, 1) });
    send({ type: 'composite', seq: 4, slot: 'panel', shift: { dx: 0.5, dy: 0 } });
    const r = last();
    expect(r.type).toBe('error');
    expect(r.type === 'error' && r.composite).toBe('panel');
    expect(r.type === 'error' && r.message).toMatch(/^The composite is drawn from one slice, but this view holds only one cell's \d+ voxels of the stack\.$/);
  });

  it('renderComposite itself refuses arrays that are not width × height', () => {
    expect(() => renderComposite({ width: W, height: H, ch1: new Uint16Array(W * H * Z), ch2: new Uint16Array(W * H * Z) }, null)).toThrow(
      `A composite of ${W} × ${H} pixels needs ${W * H} values per channel, not ${W * H * Z} and ${W * H * Z}.`,
    );
  });
});
