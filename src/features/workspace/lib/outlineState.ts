/**
 * The outline document of the field workspace: a pure reducer with undo/redo, and the plan that turns the
 * difference between the document and what the server holds into API calls.
 *
 * - Every outline has a client key (`c<id>` for cells loaded from the server, `n<k>` for new ones).
 * - `saved` maps key → the server's cell; `planSave(state)` compares document and `saved` and yields
 *   create / update / delete operations; their answers come back as `saved` actions. Undo and redo only move
 *   the document, so undoing a saved change simply plans the opposite call.
 * - A drag is one undo step: `gesture-start` records the document once; moves with `live: true` don't.
 * No DOM, no React: unit-tested in tests/workspace/outline-state.test.ts.
 */
import type { Cell, CellGeometry, CellRole, DrawnGeometry } from '@shared/schemas/cells';

export type Point = [number, number];

export interface Outline {
  key: string;
  name: string;
  role: CellRole;
  geometry: CellGeometry;
  source: Cell['source'];
}

export interface OutlineState {
  outlines: Outline[];
  selected: string | null;
  past: Outline[][];
  future: Outline[][];
  saved: Record<string, Cell>;
  /** counter for new keys */
  nextKey: number;
}

export const HISTORY_LIMIT = 200;

export type OutlineAction =
  | { type: 'load'; cells: Cell[] }
  | { type: 'add'; geometry: DrawnGeometry; role?: CellRole; name?: string }
  | { type: 'select'; key: string | null }
  | { type: 'rename'; key: string; name: string }
  | { type: 'set-role'; key: string; role: CellRole }
  | { type: 'gesture-start' }
  | { type: 'move-handle'; key: string; index: number; to: Point; live?: boolean }
  | { type: 'translate'; key: string; dx: number; dy: number; live?: boolean }
  | { type: 'insert-vertex'; key: string; index: number; at: Point }
  | { type: 'remove-vertex'; key: string; index: number }
  /** the slices (1-based, inclusive) a drawn outline covers in a stack; null = every slice */
  | { type: 'set-z'; key: string; z: [number, number] | null }
  | { type: 'delete'; key: string }
  | { type: 'undo' }
  | { type: 'redo' }
  | { type: 'saved'; key: string; cell: Cell | null };

export const keyOfCell = (c: Cell) => `c${c.id}`;

function outlineOfCell(c: Cell, key = keyOfCell(c)): Outline {
  return { key, name: c.name, role: c.role, geometry: c.geometry, source: c.source };
}

export function initialOutlineState(cells: Cell[] = []): OutlineState {
  const saved: Record<string, Cell> = {};
  for (const c of cells) saved[keyOfCell(c)] = c;
  return { outlines: cells.map((c) => outlineOfCell(c)), selected: null, past: [], future: [], saved, nextKey: 1 };
}

/** Handles a user can drag: polygon vertices; rect corners (TL, TR, BR, BL); ellipse ends (E, S, W, N). */
export function handlesOf(g: CellGeometry): Point[] {
  switch (g.kind) {
    case 'polygon':
    case 'freehand':
      return g.points;
    case 'rect':
      return [
        [g.x, g.y],
        [g.x + g.width, g.y],
        [g.x + g.width, g.y + g.height],
        [g.x, g.y + g.height],
      ];
    case 'ellipse':
      return [
        [g.cx + g.rx, g.cy],
        [g.cx, g.cy + g.ry],
        [g.cx - g.rx, g.cy],
        [g.cx, g.cy - g.ry],
      ];
    case 'label':
    case 'label3d':
      return [];
  }
}

const MIN_SIZE = 0.5;

/** The geometry after dragging handle `index` to `to` (see handlesOf). */
export function moveHandle(g: CellGeometry, index: number, to: Point): CellGeometry {
  switch (g.kind) {
    case 'polygon':
    case 'freehand': {
      if (index < 0 || index >= g.points.length) return g;
      const points = g.points.slice();
      points[index] = [to[0], to[1]];
      return { ...g, points };
    }
    case 'rect': {
      // the opposite corner stays put
      const corners = handlesOf(g);
      const opp = corners[(index + 2) % 4];
      if (!opp || index < 0 || index > 3) return g;
      const x0 = Math.min(opp[0], to[0]), x1 = Math.max(opp[0], to[0]);
      const y0 = Math.min(opp[1], to[1]), y1 = Math.max(opp[1], to[1]);
      return { kind: 'rect', x: x0, y: y0, width: Math.max(MIN_SIZE, x1 - x0), height: Math.max(MIN_SIZE, y1 - y0), ...(g.z ? { z: g.z } : {}) };
    }
    case 'ellipse': {
      if (index === 0 || index === 2) return { ...g, rx: Math.max(MIN_SIZE, Math.abs(to[0] - g.cx)) };
      if (index === 1 || index === 3) return { ...g, ry: Math.max(MIN_SIZE, Math.abs(to[1] - g.cy)) };
      return g;
    }
    case 'label':
    case 'label3d':
      return g;
  }
}

export function translateGeometry(g: CellGeometry, dx: number, dy: number): CellGeometry {
  switch (g.kind) {
    case 'polygon':
    case 'freehand':
      return { ...g, points: g.points.map(([x, y]) => [x + dx, y + dy] as Point) };
    case 'rect':
      return { ...g, x: g.x + dx, y: g.y + dy };
    case 'ellipse':
      return { ...g, cx: g.cx + dx, cy: g.cy + dy };
    case 'label':
    case 'label3d':
      return g; // label masks are pixel-exact imports; they do not move
  }
}

function commit(s: OutlineState, outlines: Outline[], extra: Partial<OutlineState> = {}): OutlineState {
  const past = [...s.past, s.outlines];
  if (past.length > HISTORY_LIMIT) past.shift();
  return { ...s, ...extra, outlines, past, future: [] };
}

function update(s: OutlineState, key: string, f: (o: Outline) => Outline | null, live = false): OutlineState {
  const i = s.outlines.findIndex((o) => o.key === key);
  if (i < 0) return s;
  const next = f(s.outlines[i]);
  if (next === s.outlines[i]) return s;
  const outlines = s.outlines.slice();
  if (next) outlines[i] = next;
  else outlines.splice(i, 1);
  if (live) return { ...s, outlines };
  return commit(s, outlines);
}

export function outlineReducer(s: OutlineState, a: OutlineAction): OutlineState {
  switch (a.type) {
    case 'load': {
      // server truth, matched by cell id so client keys (and the selection) stay stable; unsaved local work
      // (new outlines, pending edits and deletes) is kept
      const byId = new Map(a.cells.map((c) => [c.id, c]));
      const pending = new Set(planSave(s).map((op) => op.key));
      const saved: Record<string, Cell> = {};
      const claimed = new Set<number>();
      for (const [key, c] of Object.entries(s.saved)) {
        const now = byId.get(c.id);
        if (now) (saved[key] = now), claimed.add(c.id);
      }
      const outlines: Outline[] = [];
      for (const o of s.outlines) {
        if (pending.has(o.key)) outlines.push(o);
        else if (saved[o.key]) outlines.push(outlineOfCell(saved[o.key], o.key));
      }
      for (const c of a.cells) {
        if (claimed.has(c.id)) continue;
        const k = keyOfCell(c);
        saved[k] = c;
        outlines.push(outlineOfCell(c));
      }
      const selected = s.selected && outlines.some((o) => o.key === s.selected) ? s.selected : null;
      return { ...s, outlines, saved, selected };
    }
    case 'add': {
      const key = `n${s.nextKey}`;
      const role = a.role ?? 'cell';
      const n = s.outlines.filter((o) => o.role === role).length + 1;
      const name = a.name ?? `${role === 'background' ? 'Background' : 'Cell'} ${n}`;
      const o: Outline = { key, name, role, geometry: a.geometry, source: 'drawn' };
      return commit(s, [...s.outlines, o], { selected: key, nextKey: s.nextKey + 1 });
    }
    case 'select':
      return s.selected === a.key ? s : { ...s, selected: a.key };
    case 'rename': {
      const name = a.name.trim();
      if (!name) return s;
      return update(s, a.key, (o) => (o.name === name ? o : { ...o, name }));
    }
    case 'set-role':
      return update(s, a.key, (o) => (o.role === a.role ? o : { ...o, role: a.role }));
    case 'gesture-start': {
      const past = [...s.past, s.outlines];
      if (past.length > HISTORY_LIMIT) past.shift();
      return { ...s, past, future: [] };
    }
    case 'move-handle':
      return update(s, a.key, (o) => (o.geometry.kind === 'label' ? o : { ...o, geometry: moveHandle(o.geometry, a.index, a.to) }), a.live);
    case 'translate':
      return update(s, a.key, (o) => (o.geometry.kind === 'label' || (a.dx === 0 && a.dy === 0) ? o : { ...o, geometry: translateGeometry(o.geometry, a.dx, a.dy) }), a.live);
    case 'insert-vertex':
      return update(s, a.key, (o) => {
        const g = o.geometry;
        if (g.kind !== 'polygon' && g.kind !== 'freehand') return o;
        const points = g.points.slice();
        points.splice(Math.max(0, Math.min(points.length, a.index)), 0, a.at);
        return { ...o, geometry: { ...g, points } };
      });
    case 'remove-vertex':
      return update(s, a.key, (o) => {
        const g = o.geometry;
        if ((g.kind !== 'polygon' && g.kind !== 'freehand') || g.points.length <= 3 || a.index < 0 || a.index >= g.points.length) return o;
        return { ...o, geometry: { ...g, points: g.points.filter((_, i) => i !== a.index) } };
      });
    case 'set-z':
      return update(s, a.key, (o) => {
        const g = o.geometry;
        if (g.kind === 'label' || g.kind === 'label3d') return o;
        const same = a.z === null ? !g.z : !!g.z && g.z[0] === a.z[0] && g.z[1] === a.z[1];
        if (same) return o;
        const { z: _old, ...rest } = g;
        return { ...o, geometry: a.z === null ? rest : { ...rest, z: a.z } };
      });
    case 'delete': {
      const next = update(s, a.key, () => null);
      return next === s ? s : { ...next, selected: s.selected === a.key ? null : next.selected };
    }
    case 'undo': {
      if (!s.past.length) return s;
      const prev = s.past[s.past.length - 1];
      const selected = s.selected && prev.some((o) => o.key === s.selected) ? s.selected : null;
      return { ...s, outlines: prev, past: s.past.slice(0, -1), future: [s.outlines, ...s.future], selected };
    }
    case 'redo': {
      if (!s.future.length) return s;
      const [next, ...rest] = s.future;
      const selected = s.selected && next.some((o) => o.key === s.selected) ? s.selected : null;
      return { ...s, outlines: next, past: [...s.past, s.outlines], future: rest, selected };
    }
    case 'saved': {
      const saved = { ...s.saved };
      if (a.cell) saved[a.key] = a.cell;
      else delete saved[a.key];
      return { ...s, saved };
    }
  }
}

export type SaveOp =
  | { op: 'create'; key: string; body: { name: string; role: CellRole; geometry: DrawnGeometry } }
  | { op: 'update'; key: string; id: number; body: { name?: string; role?: CellRole; geometry?: DrawnGeometry } }
  | { op: 'delete'; key: string; id: number };

const sameGeometry = (a: CellGeometry, b: CellGeometry) => a === b || JSON.stringify(a) === JSON.stringify(b);

/** The API calls that make the server hold the document (creates, then updates, then deletes). */
export function planSave(s: Pick<OutlineState, 'outlines' | 'saved'>): SaveOp[] {
  const ops: SaveOp[] = [];
  const inDoc = new Set<string>();
  for (const o of s.outlines) {
    inDoc.add(o.key);
    const c = s.saved[o.key];
    if (!c) {
      if (o.geometry.kind === 'label' || o.geometry.kind === 'label3d') continue; // label cells only come from the server
      ops.push({ op: 'create', key: o.key, body: { name: o.name, role: o.role, geometry: o.geometry } });
      continue;
    }
    const body: Extract<SaveOp, { op: 'update' }>['body'] = {};
    if (o.name !== c.name) body.name = o.name;
    if (o.role !== c.role) body.role = o.role;
    if (!sameGeometry(o.geometry, c.geometry) && o.geometry.kind !== 'label' && o.geometry.kind !== 'label3d') body.geometry = o.geometry;
    if (Object.keys(body).length) ops.push({ op: 'update', key: o.key, id: c.id, body });
  }
  for (const [key, c] of Object.entries(s.saved)) if (!inDoc.has(key)) ops.push({ op: 'delete', key, id: c.id });
  return ops;
}

/**
 * Thins a freehand stroke: drops points closer than `minStep` pixels to the last kept one (the outline stays
 * within `minStep` of the stroke), so a long stroke stays well below the vertex limit.
 */
export function thinStroke(points: Point[], minStep = 1): Point[] {
  if (points.length <= 2) return points.slice();
  const out: Point[] = [points[0]];
  for (let i = 1; i < points.length; i++) {
    const [lx, ly] = out[out.length - 1];
    const [x, y] = points[i];
    if ((x - lx) ** 2 + (y - ly) ** 2 >= minStep * minStep) out.push([x, y]);
  }
  return out;
}

/** Distance from p to the segment ab (for "insert a vertex on the nearest edge"). */
export function segmentDistance(p: Point, a: Point, b: Point): number {
  const dx = b[0] - a[0], dy = b[1] - a[1];
  const L = dx * dx + dy * dy;
  const t = L === 0 ? 0 : Math.max(0, Math.min(1, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / L));
  return Math.hypot(p[0] - (a[0] + t * dx), p[1] - (a[1] + t * dy));
}

/** Index at which a new vertex at p belongs: after the start of the nearest edge. */
export function nearestEdge(points: Point[], p: Point): number {
  let best = 0, bd = Infinity;
  for (let i = 0; i < points.length; i++) {
    const d = segmentDistance(p, points[i], points[(i + 1) % points.length]);
    if (d < bd) (bd = d), (best = i);
  }
  return best + 1;
}
