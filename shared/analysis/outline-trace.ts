/**
 * The outline of a pixel set along pixel edges ("crack" boundary: the edges between a set pixel and an unset
 * or outside one; Freeman 1961, IRE Trans. Electronic Computers EC-10(2):260–268,
 * doi:10.1109/TEC.1961.5219197 for chain-coded boundaries; Rosenfeld 1970, J. ACM 17(1):146–160,
 * doi:10.1145/321556.321570 for 4-/8-connectivity — both from memory), as polygons with holes.
 *
 * Coordinates are those of shared/analysis/rasterize.ts: x right, y down, pixel (i, j) covers
 * [i, i+1) × [j, j+1). Every boundary edge is directed with the set pixel on its right on screen (so an outer
 * ring has a positive shoelace area Σ (xₖ·yₖ₊₁ − xₖ₊₁·yₖ) / 2 in these coordinates and a hole a negative one),
 * edges are linked into closed rings, turning right at a vertex where two set pixels touch only diagonally
 * (set pixels are 4-connected; such rings touch at that vertex), and collinear vertices are dropped. Each hole
 * goes to the smallest outer ring containing a pixel centre inside it.
 *
 * Exactness: every vertex is an integer point and every pixel centre a half-integer one, so no centre lies on
 * a ring; filling the rings of each polygon by the even-odd rule (rasterize.ts `fillRings`) and joining the
 * polygons gives back exactly the input set. Deterministic: rings start at their first edge in row-major
 * scan order.
 *
 * Degenerate cases: an empty set → no polygons. Indices outside width × height → RangeError.
 */
import type { Point } from './rasterize';

export interface OutlinePolygon {
  /** the outer ring, then its holes; each ring closed implicitly (first vertex not repeated) */
  rings: Point[][];
}

const ringArea = (r: Point[]) => {
  let a = 0;
  for (let k = 0; k < r.length; k++) {
    const [x0, y0] = r[k];
    const [x1, y1] = r[(k + 1) % r.length];
    a += x0 * y1 - x1 * y0;
  }
  return a / 2;
};

/** Even-odd test of a point (never on the ring here) against one ring. */
function inside(r: Point[], x: number, y: number): boolean {
  let odd = false;
  for (let k = 0, m = r.length; k < m; k++) {
    const [ax, ay] = r[k];
    const [bx, by] = r[(k + 1) % m];
    if (ay > y !== by > y && ax + ((y - ay) * (bx - ax)) / (by - ay) > x) odd = !odd;
  }
  return odd;
}

/** Polygons (outer ring + holes) whose even-odd fill is exactly the pixels `indices` (y·width + x) of a width × height field. */
export function traceOutline(indices: ArrayLike<number>, width: number, height: number): OutlinePolygon[] {
  const n = indices.length;
  if (n === 0) return [];
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (let k = 0; k < n; k++) {
    const p = indices[k];
    if (!(Number.isInteger(p) && p >= 0 && p < width * height)) throw new RangeError(`pixel index ${p} is outside the ${width} × ${height} field`);
    const x = p % width, y = (p - x) / width;
    if (x < x0) x0 = x;
    if (x > x1) x1 = x;
    if (y < y0) y0 = y;
    if (y > y1) y1 = y;
  }
  // local mask with a one-pixel empty margin
  const bw = x1 - x0 + 3, bh = y1 - y0 + 3;
  const mask = new Uint8Array(bw * bh);
  for (let k = 0; k < n; k++) {
    const p = indices[k];
    const x = p % width, y = (p - x) / width;
    mask[(y - y0 + 1) * bw + (x - x0 + 1)] = 1;
  }
  // directed edges between vertices (local vertex grid (bw + 1) × (bh + 1)); set pixel on the right on screen
  const vw = bw + 1;
  const from: number[] = [], to: number[] = [];
  const out = new Map<number, number[]>();
  const add = (ax: number, ay: number, bx: number, by: number) => {
    const a = ay * vw + ax;
    from.push(a);
    to.push(by * vw + bx);
    const list = out.get(a);
    if (list) list.push(from.length - 1);
    else out.set(a, [from.length - 1]);
  };
  for (let j = 1; j < bh - 1; j++)
    for (let i = 1; i < bw - 1; i++) {
      if (!mask[j * bw + i]) continue;
      if (!mask[(j - 1) * bw + i]) add(i, j, i + 1, j); // top, going east
      if (!mask[j * bw + i + 1]) add(i + 1, j, i + 1, j + 1); // right, going south
      if (!mask[(j + 1) * bw + i]) add(i + 1, j + 1, i, j + 1); // bottom, going west
      if (!mask[j * bw + i - 1]) add(i, j + 1, i, j); // left, going north
    }
  const used = new Uint8Array(from.length);
  const dir = (e: number) => {
    const ax = from[e] % vw, ay = (from[e] - ax) / vw, bx = to[e] % vw, by = (to[e] - bx) / vw;
    return [bx - ax, by - ay] as const;
  };
  const rings: Point[][] = [];
  for (let start = 0; start < from.length; start++) {
    if (used[start]) continue;
    const verts: Point[] = [];
    let e = start;
    do {
      used[e] = 1;
      const v = from[e];
      const vx = v % vw;
      verts.push([vx - 1 + x0, (v - vx) / vw - 1 + y0]);
      const options = out.get(to[e])!.filter((k) => !used[k] || k === start);
      let next = options[0];
      if (options.length > 1) {
        // two set pixels meet only at this corner: turn right on screen, (dx, dy) → (−dy, dx)
        const [dx, dy] = dir(e);
        next = options.find((k) => {
          const [ex, ey] = dir(k);
          return ex === -dy && ey === dx;
        })!;
      }
      e = next;
    } while (e !== start);
    // drop collinear vertices (cyclically)
    const m = verts.length;
    const corners = verts.filter((p, k) => {
      const a = verts[(k + m - 1) % m], b = verts[(k + 1) % m];
      return (p[0] - a[0]) * (b[1] - p[1]) - (p[1] - a[1]) * (b[0] - p[0]) !== 0;
    });
    rings.push(corners);
  }
  const outers = rings.filter((r) => ringArea(r) > 0).map((r) => ({ r, area: ringArea(r), holes: [] as Point[][] }));
  for (const h of rings.filter((r) => ringArea(r) < 0)) {
    // a pixel centre inside the hole: left of its first edge (west of a south-going edge, etc.)
    const [ax, ay] = h[0], [bx, by] = h[1];
    const len = Math.abs(bx - ax) + Math.abs(by - ay);
    const dx = (bx - ax) / len, dy = (by - ay) / len;
    const px = ax + 0.5 * dx + 0.5 * dy, py = ay + 0.5 * dy - 0.5 * dx;
    let best: (typeof outers)[number] | null = null;
    for (const o of outers) if ((!best || o.area < best.area) && inside(o.r, px, py)) best = o;
    if (!best) throw new Error('outline tracing: a hole lies in no outer ring (a bug: the boundary is closed)');
    best.holes.push(h);
  }
  return outers.map((o) => ({ rings: [o.r, ...o.holes] }));
}

/** Signed area of a ring by the shoelace formula (positive for outer rings of traceOutline). */
export { ringArea };
