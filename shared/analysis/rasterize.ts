/**
 * Rasterizing drawn outlines to pixel masks with one rule everywhere (browser preview and server agree):
 * pixel (i, j) — column i, row j, image origin at the top-left corner of pixel (0, 0), x right, y down —
 * belongs to a shape when its centre (i + 0.5, j + 0.5) is inside it.
 *
 * Polygons (also rectangles and freehand outlines) use the even-odd rule (crossing-number test;
 * Shimrat 1962, Commun. ACM 5:434, doi:10.1145/368637.368653), evaluated per row with a scanline: an
 * edge crosses row j when exactly one of its ends has y > j + 0.5, and a pixel is inside when an odd number
 * of crossings lie at or left of its centre. So a centre exactly on a left or top edge is inside and one on
 * a right or bottom edge is outside: rectangles are half-open [x, x+w) × [y, y+h) and two shapes that
 * share an edge never share a pixel. Ellipses: inside when ((cx−u)/rx)² + ((cy−v)/ry)² ≤ 1 in
 * the ellipse's rotated frame (boundary included).
 *
 * Degenerate cases: fewer than 3 vertices, or no pixel centre inside → an empty mask. Non-finite
 * coordinates → RangeError.
 */
export type Point = [number, number];

export type Shape =
  | { kind: 'polygon'; points: Point[] }
  | { kind: 'rectangle'; x: number; y: number; width: number; height: number }
  | { kind: 'ellipse'; cx: number; cy: number; rx: number; ry: number; /** radians, clockwise on screen */ angle?: number };

function checkSize(width: number, height: number): void {
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0))
    throw new RangeError(`image size must be positive integers, received ${width}×${height}`);
}

function finite(v: number, what: string): void {
  if (!Number.isFinite(v)) throw new RangeError(`${what} must be a finite number, received ${v}`);
}

/** Even-odd polygon fill into `mask` (sets 1). */
export function fillPolygon(mask: Uint8Array, width: number, height: number, points: Point[]): void {
  fillRings(mask, width, height, [points]);
}

/**
 * Even-odd fill of several rings at once (a polygon with holes: the crossings of every ring count together,
 * so a pixel centre inside the outer ring and inside one hole is outside). Rings of fewer than 3 vertices
 * add nothing. Sets 1 in `mask`.
 */
export function fillRings(mask: Uint8Array, width: number, height: number, rings: Point[][]): void {
  checkSize(width, height);
  if (mask.length !== width * height) throw new RangeError(`mask has ${mask.length} pixels, expected ${width * height}`);
  fillRingsIn({ mask, x0: 0, y0: 0, stride: width }, width, height, rings);
}

/**
 * Where a fill writes: pixel (i, j) of the width × height image goes to `mask[(j − y0) · stride + (i − x0)]`.
 * The whole image is { x0: 0, y0: 0, stride: width }; a window covering a shape's bounds (`shapeIndices`) lets
 * one shape be rasterized without a mask of the whole image. The inside/outside decisions are made in image
 * coordinates either way, so the pixels are the same.
 */
interface Target {
  mask: Uint8Array;
  x0: number;
  y0: number;
  stride: number;
}

function fillRingsIn(t: Target, width: number, height: number, rings: Point[][]): void {
  const { mask, x0, y0, stride } = t;
  let ymin = Infinity, ymax = -Infinity;
  const used = rings.filter((r) => r.length >= 3);
  for (const ring of rings)
    for (const [px, py] of ring) {
      finite(px, 'polygon x');
      finite(py, 'polygon y');
    }
  for (const ring of used)
    for (const [, py] of ring) {
      if (py < ymin) ymin = py;
      if (py > ymax) ymax = py;
    }
  if (!used.length) return;
  const j0 = Math.max(0, Math.floor(ymin - 0.5)), j1 = Math.min(height - 1, Math.ceil(ymax - 0.5));
  const xs: number[] = [];
  for (let j = j0; j <= j1; j++) {
    const yc = j + 0.5;
    xs.length = 0;
    for (const points of used) {
      const m = points.length;
      for (let e = 0; e < m; e++) {
        const [ax, ay] = points[e];
        const [bx, by] = points[(e + 1) % m];
        if (ay > yc !== by > yc) xs.push(ax + ((yc - ay) * (bx - ax)) / (by - ay));
      }
    }
    xs.sort((a, b) => a - b);
    for (let k = 0; k + 1 < xs.length; k += 2) {
      // centres c = i + 0.5 with xs[k] ≤ c < xs[k+1] have an odd number of crossings at or left of c
      const i0 = Math.max(0, Math.ceil(xs[k] - 0.5));
      const i1 = Math.min(width - 1, Math.ceil(xs[k + 1] - 0.5) - 1);
      const row = (j - y0) * stride - x0;
      for (let i = i0; i <= i1; i++) mask[row + i] = 1;
    }
  }
}

type EllipseShape = { cx: number; cy: number; rx: number; ry: number; angle?: number };

export function fillEllipse(mask: Uint8Array, width: number, height: number, s: EllipseShape): void {
  checkSize(width, height);
  checkEllipse(s);
  fillEllipseIn({ mask, x0: 0, y0: 0, stride: width }, width, height, s);
}

function checkEllipse(s: EllipseShape): void {
  for (const k of ['cx', 'cy', 'rx', 'ry'] as const) finite(s[k], `ellipse ${k}`);
  finite(s.angle ?? 0, 'ellipse angle');
}

/** The pixel rows j0..j1 and columns i0..i1 an ellipse's fill visits (clamped to the image). */
function ellipseBounds(s: EllipseShape, width: number, height: number) {
  const R = Math.max(s.rx, s.ry);
  return { j0: Math.max(0, Math.floor(s.cy - R - 1)), j1: Math.min(height - 1, Math.ceil(s.cy + R)), i0: Math.max(0, Math.floor(s.cx - R - 1)), i1: Math.min(width - 1, Math.ceil(s.cx + R)) };
}

function fillEllipseIn(t: Target, width: number, height: number, s: EllipseShape): void {
  if (!(s.rx > 0 && s.ry > 0)) return;
  const { mask, x0, y0, stride } = t;
  const angle = s.angle ?? 0;
  const cos = Math.cos(angle), sin = Math.sin(angle);
  const { j0, j1, i0, i1 } = ellipseBounds(s, width, height);
  for (let j = j0; j <= j1; j++) {
    const dy = j + 0.5 - s.cy;
    const row = (j - y0) * stride - x0;
    for (let i = i0; i <= i1; i++) {
      const dx = i + 0.5 - s.cx;
      const u = dx * cos + dy * sin, v = -dx * sin + dy * cos;
      if ((u / s.rx) ** 2 + (v / s.ry) ** 2 <= 1) mask[row + i] = 1;
    }
  }
}

/** Mask (1 = inside) of one shape. */
export function rasterize(shape: Shape, width: number, height: number): Uint8Array {
  checkSize(width, height);
  return rasterizeInto(new Uint8Array(width * height), shape, width, height);
}

/**
 * Sets the pixels of one shape to 1 in an existing width × height mask (pixels already set stay set), so the
 * union of many shapes takes one mask instead of one per shape. Same rule as `rasterize`.
 */
export function rasterizeInto(mask: Uint8Array, shape: Shape, width: number, height: number): Uint8Array {
  checkSize(width, height);
  if (mask.length !== width * height) throw new RangeError(`mask has ${mask.length} pixels, expected ${width * height}`);
  if (shape.kind === 'polygon') fillPolygon(mask, width, height, shape.points);
  else if (shape.kind === 'rectangle') {
    const { x, y, width: w, height: h } = shape;
    for (const v of [x, y, w, h]) finite(v, 'rectangle coordinate');
    fillPolygon(mask, width, height, [[x, y], [x + w, y], [x + w, y + h], [x, y + h]]);
  } else if (shape.kind === 'ellipse') fillEllipse(mask, width, height, shape);
  else throw new RangeError(`unknown shape kind: ${String((shape as { kind: unknown }).kind)}`);
  return mask;
}

/** A shape's outline as the polygon fill takes it (a rectangle as its four corners), checked for finite values. */
function ringsOf(shape: Exclude<Shape, { kind: 'ellipse' }>): Point[] {
  if (shape.kind === 'polygon') return shape.points;
  const { x, y, width: w, height: h } = shape;
  for (const v of [x, y, w, h]) finite(v, 'rectangle coordinate');
  return [[x, y], [x + w, y], [x + w, y + h], [x, y + h]];
}

/**
 * Linear indices (y·width + x, ascending) of one shape's pixels: the same pixels as
 * `maskToIndices(rasterize(shape, width, height))`, rasterized into a window over the shape's bounds (rows of
 * its vertical extent, columns of its horizontal extent with one pixel to spare each side) rather than a mask
 * of the whole image, so a small cell in a big field costs its own size, not the field's.
 */
export function shapeIndices(shape: Shape, width: number, height: number): Uint32Array {
  checkSize(width, height);
  let j0: number, j1: number, i0: number, i1: number;
  if (shape.kind === 'ellipse') {
    checkEllipse(shape);
    if (!(shape.rx > 0 && shape.ry > 0)) return new Uint32Array(0);
    ({ j0, j1, i0, i1 } = ellipseBounds(shape, width, height));
  } else if (shape.kind === 'polygon' || shape.kind === 'rectangle') {
    const ring = ringsOf(shape);
    for (const [px, py] of ring) {
      finite(px, 'polygon x');
      finite(py, 'polygon y');
    }
    if (ring.length < 3) return new Uint32Array(0);
    let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
    for (const [px, py] of ring) {
      if (px < xmin) xmin = px;
      if (px > xmax) xmax = px;
      if (py < ymin) ymin = py;
      if (py > ymax) ymax = py;
    }
    // the fill's rows (fillRingsIn); its columns lie between the crossings, which lie between xmin and xmax
    j0 = Math.max(0, Math.floor(ymin - 0.5));
    j1 = Math.min(height - 1, Math.ceil(ymax - 0.5));
    i0 = Math.max(0, Math.floor(xmin - 0.5) - 1);
    i1 = Math.min(width - 1, Math.ceil(xmax - 0.5) + 1);
  } else throw new RangeError(`unknown shape kind: ${String((shape as { kind: unknown }).kind)}`);
  if (j1 < j0 || i1 < i0) return new Uint32Array(0);
  const stride = i1 - i0 + 1;
  const t: Target = { mask: new Uint8Array((j1 - j0 + 1) * stride), x0: i0, y0: j0, stride };
  if (shape.kind === 'ellipse') fillEllipseIn(t, width, height, shape);
  else fillRingsIn(t, width, height, [ringsOf(shape)]);
  let c = 0;
  for (let k = 0; k < t.mask.length; k++) c += t.mask[k];
  const out = new Uint32Array(c);
  c = 0;
  for (let r = 0, k = 0; r <= j1 - j0; r++) {
    const base = (j0 + r) * width + i0;
    for (let q = 0; q < stride; q++, k++) if (t.mask[k]) out[c++] = base + q;
  }
  return out;
}

/** Linear indices (y·width + x) of the set pixels of a mask, ascending. */
export function maskToIndices(mask: Uint8Array): Uint32Array {
  let c = 0;
  for (let i = 0; i < mask.length; i++) if (mask[i]) c++;
  const out = new Uint32Array(c);
  c = 0;
  for (let i = 0; i < mask.length; i++) if (mask[i]) out[c++] = i;
  return out;
}
