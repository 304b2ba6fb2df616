/** The workspace's outline document: vertex editing, undo/redo and the save plan (pure reducer). */
import { describe, expect, it } from 'vitest';
import {
  initialOutlineState,
  outlineReducer as R,
  planSave,
  handlesOf,
  moveHandle,
  thinStroke,
  nearestEdge,
  type OutlineState,
  type OutlineAction,
} from '../../src/features/workspace/lib/outlineState';
import type { Cell } from '../../shared/schemas/cells';

const tri = { kind: 'polygon' as const, points: [[0, 0], [10, 0], [0, 10]] as [number, number][] };
const cell = (id: number, over: Partial<Cell> = {}): Cell => ({
  id,
  fieldId: 1,
  name: `Cell ${id}`,
  role: 'cell',
  geometry: tri,
  source: 'drawn',
  origin: { how: 'drawn' },
  pixelCount: 50,
  zRange: [1, 1],
  voxelCount: 50,
  excluded: false,
  exclusionReason: null,
  createdAt: '2026-12-01T00:00:00Z',
  ...over,
});
const run = (s: OutlineState, ...as: OutlineAction[]) => as.reduce(R, s);

describe('drawing and vertex editing', () => {
  it('adds an outline, selects it and names it in sequence', () => {
    const s = run(initialOutlineState(), { type: 'add', geometry: tri }, { type: 'add', geometry: { kind: 'rect', x: 1, y: 1, width: 3, height: 2 } });
    expect(s.outlines.map((o) => o.name)).toEqual(['Cell 1', 'Cell 2']);
    expect(s.selected).toBe(s.outlines[1].key);
  });
  it('moves, inserts and removes polygon vertices (never below 3)', () => {
    let s = run(initialOutlineState(), { type: 'add', geometry: tri });
    const k = s.outlines[0].key;
    s = run(s, { type: 'move-handle', key: k, index: 1, to: [20, 0] });
    expect(s.outlines[0].geometry).toEqual({ kind: 'polygon', points: [[0, 0], [20, 0], [0, 10]] });
    s = run(s, { type: 'insert-vertex', key: k, index: 2, at: [15, 15] });
    expect((s.outlines[0].geometry as typeof tri).points).toHaveLength(4);
    s = run(s, { type: 'remove-vertex', key: k, index: 2 }, { type: 'remove-vertex', key: k, index: 0 });
    expect((s.outlines[0].geometry as typeof tri).points).toEqual([[0, 0], [20, 0], [0, 10]]);
  });
  it('rectangle corners keep the opposite corner fixed; ellipse handles change one radius', () => {
    const r = { kind: 'rect' as const, x: 2, y: 2, width: 4, height: 4 };
    expect(handlesOf(r)).toEqual([[2, 2], [6, 2], [6, 6], [2, 6]]);
    expect(moveHandle(r, 2, [10, 8])).toEqual({ kind: 'rect', x: 2, y: 2, width: 8, height: 6 });
    // dragging past the opposite corner flips the rectangle instead of giving a negative size
    expect(moveHandle(r, 0, [8, 8])).toEqual({ kind: 'rect', x: 6, y: 6, width: 2, height: 2 });
    const e = { kind: 'ellipse' as const, cx: 5, cy: 5, rx: 2, ry: 3 };
    expect(moveHandle(e, 0, [9, 100])).toEqual({ ...e, rx: 4 });
    expect(moveHandle(e, 3, [0, 1])).toEqual({ ...e, ry: 4 });
  });
  it('label outlines cannot be moved (pixel-exact imports)', () => {
    const lab = cell(5, { geometry: { kind: 'label', label: 3, rle: [0, 4] }, source: 'label_image' });
    const s = run(initialOutlineState([lab]), { type: 'translate', key: 'c5', dx: 3, dy: 0 }, { type: 'move-handle', key: 'c5', index: 0, to: [1, 1] });
    expect(s.outlines[0].geometry).toEqual(lab.geometry);
    expect(s.past).toHaveLength(0);
  });
  it('nearestEdge puts a new vertex on the closest edge; thinStroke keeps points ≥ step apart', () => {
    expect(nearestEdge([[0, 0], [10, 0], [10, 10], [0, 10]], [10.2, 5])).toBe(2);
    expect(thinStroke([[0, 0], [0.3, 0], [0.9, 0], [1.2, 0], [3, 0]], 1)).toEqual([[0, 0], [1.2, 0], [3, 0]]);
  });
});

describe('undo and redo', () => {
  it('undoes and redoes every step in order; a new edit clears redo', () => {
    let s = run(initialOutlineState(), { type: 'add', geometry: tri });
    const k = s.outlines[0].key;
    s = run(s, { type: 'rename', key: k, name: 'Nucleus' }, { type: 'move-handle', key: k, index: 0, to: [1, 1] });
    const edited = s.outlines;
    s = run(s, { type: 'undo' });
    expect((s.outlines[0].geometry as typeof tri).points[0]).toEqual([0, 0]);
    expect(s.outlines[0].name).toBe('Nucleus');
    s = run(s, { type: 'undo' }, { type: 'undo' });
    expect(s.outlines).toEqual([]);
    s = run(s, { type: 'undo' }); // nothing left: no change
    expect(s.past).toHaveLength(0);
    s = run(s, { type: 'redo' }, { type: 'redo' }, { type: 'redo' });
    expect(s.outlines).toEqual(edited);
    s = run(s, { type: 'undo' }, { type: 'delete', key: k });
    expect(s.future).toHaveLength(0);
    expect(s.outlines).toEqual([]);
  });
  it('a drag is one undo step (gesture-start + live moves)', () => {
    let s = run(initialOutlineState(), { type: 'add', geometry: tri });
    const k = s.outlines[0].key;
    const before = s.outlines;
    s = run(s, { type: 'gesture-start' });
    for (let i = 1; i <= 20; i++) s = R(s, { type: 'move-handle', key: k, index: 1, to: [10 + i, 0], live: true });
    expect((s.outlines[0].geometry as typeof tri).points[1]).toEqual([30, 0]);
    s = R(s, { type: 'undo' });
    expect(s.outlines).toEqual(before);
  });
  it('undo of a deleted, selected outline restores it; no-op edits add no history', () => {
    let s = run(initialOutlineState([cell(1)]), { type: 'select', key: 'c1' }, { type: 'delete', key: 'c1' });
    expect(s.selected).toBeNull();
    s = run(s, { type: 'undo' });
    expect(s.outlines.map((o) => o.key)).toEqual(['c1']);
    const h = s.past.length;
    s = run(s, { type: 'rename', key: 'c1', name: 'Cell 1' }, { type: 'rename', key: 'c1', name: '   ' }, { type: 'translate', key: 'c1', dx: 0, dy: 0 });
    expect(s.past.length).toBe(h);
  });
});

describe('save plan', () => {
  it('plans creates, updates and deletes against what the server holds; undo plans the opposite', () => {
    let s = initialOutlineState([cell(1), cell(2)]);
    expect(planSave(s)).toEqual([]);
    s = run(s, { type: 'add', geometry: tri, role: 'background' }, { type: 'rename', key: 'c1', name: 'A' }, { type: 'delete', key: 'c2' });
    expect(planSave(s)).toEqual([
      { op: 'update', key: 'c1', id: 1, body: { name: 'A' } },
      { op: 'create', key: 'n1', body: { name: 'Background 1', role: 'background', geometry: tri } },
      { op: 'delete', key: 'c2', id: 2 },
    ]);
    // the server answers
    s = run(s, { type: 'saved', key: 'c1', cell: cell(1, { name: 'A' }) }, { type: 'saved', key: 'n1', cell: cell(7, { name: 'Background 1', role: 'background' }) }, { type: 'saved', key: 'c2', cell: null });
    expect(planSave(s)).toEqual([]);
    // undo the delete of cell 2: it is created again (its old row is gone)
    s = run(s, { type: 'undo' });
    expect(planSave(s)).toEqual([{ op: 'create', key: 'c2', body: { name: 'Cell 2', role: 'cell', geometry: tri } }]);
  });
  it('a new outline keeps its key and selection after it is saved and the list reloads', () => {
    let s = run(initialOutlineState(), { type: 'add', geometry: tri });
    expect(s.selected).toBe('n1');
    s = run(s, { type: 'saved', key: 'n1', cell: cell(12, { name: 'Cell 1' }) }, { type: 'load', cells: [cell(12, { name: 'Cell 1' })] });
    expect(s.outlines.map((o) => o.key)).toEqual(['n1']);
    expect(s.selected).toBe('n1');
    expect(planSave(s)).toEqual([]);
    // a cell deleted elsewhere disappears; one added elsewhere appears
    s = R(s, { type: 'load', cells: [cell(13)] });
    expect(s.outlines.map((o) => o.key)).toEqual(['c13']);
    expect(s.selected).toBeNull();
  });
  it('a server reload keeps pending local work and adopts new server cells', () => {
    let s = run(initialOutlineState([cell(1)]), { type: 'add', geometry: tri }, { type: 'move-handle', key: 'c1', index: 0, to: [2, 2] });
    s = R(s, { type: 'load', cells: [cell(1), cell(9)] });
    expect(s.outlines.map((o) => o.key)).toEqual(['c1', 'n1', 'c9']);
    expect((s.outlines[0].geometry as typeof tri).points[0]).toEqual([2, 2]);
    expect(planSave(s).map((o) => o.op)).toEqual(['update', 'create']);
  });
  it('a geometry change of a measured cell that came back as a new row is adopted on reload', () => {
    let s = run(initialOutlineState([cell(1)]), { type: 'move-handle', key: 'c1', index: 0, to: [2, 2] });
    const moved = s.outlines[0].geometry;
    s = R(s, { type: 'saved', key: 'c1', cell: cell(4, { geometry: moved, name: 'Cell 1' }) });
    expect(planSave(s)).toEqual([]);
    s = R(s, { type: 'load', cells: [cell(4, { geometry: moved, name: 'Cell 1' })] });
    // the client key stays (so the selection does); it now stands for cell 4
    expect(s.outlines.map((o) => o.key)).toEqual(['c1']);
    expect(s.saved.c1.id).toBe(4);
    expect(planSave(s)).toEqual([]);
  });
});
