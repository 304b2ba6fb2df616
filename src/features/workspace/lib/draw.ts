/**
 * Geometry of the outline tools (pure): the shapes a drag makes, SVG paths of stored outlines, and the
 * image ↔ screen transform of the viewer. Which pixels an outline holds is decided only by cellIndices
 * (shared/schemas/cells.ts → shared/analysis/rasterize.ts), the same code the server measures with.
 */
import type { CellGeometry, DrawnGeometry } from '@shared/schemas/cells';
import { thinStroke, type Point } from './outlineState';
import { runsBounds } from '@shared/analysis/rle';

/** Smallest drawn box/oval side in image pixels (a click without a drag makes nothing). */
export const MIN_DRAG = 1;

export function boxFromDrag(a: Point, b: Point): DrawnGeometry | null {
  const x = Math.min(a[0], b[0]), y = Math.min(a[1], b[1]);
  const width = Math.abs(a[0] - b[0]), height = Math.abs(a[1] - b[1]);
  if (width < MIN_DRAG || height < MIN_DRAG) return null;
  return { kind: 'rect', x, y, width, height };
}

/** The oval inscribed in the dragged box. */
export function ellipseFromDrag(a: Point, b: Point): DrawnGeometry | null {
  const rx = Math.abs(a[0] - b[0]) / 2, ry = Math.abs(a[1] - b[1]) / 2;
  if (rx * 2 < MIN_DRAG || ry * 2 < MIN_DRAG) return null;
  return { kind: 'ellipse', cx: (a[0] + b[0]) / 2, cy: (a[1] + b[1]) / 2, rx, ry };
}

/** A freehand stroke as an outline: thinned to ≥ `step` px between points (screen-size dependent). */
export function traceFromStroke(points: Point[], step = 1): DrawnGeometry | null {
  const pts = thinStroke(points, step);
  if (pts.length < 3) return null;
  return { kind: 'freehand', points: pts.map(([x, y]) => [round2(x), round2(y)] as Point) };
}

/** Coordinates are kept to 1/100 pixel: enough for the centre rule, small JSON. */
export const round2 = (v: number) => Math.round(v * 100) / 100;

/** A polygon from clicked points (repeated points, e.g. from a double click, are dropped). */
export function polygonFromClicks(points: Point[]): DrawnGeometry | null {
  const pts: Point[] = [];
  for (const [x, y] of points) {
    const q: Point = [round2(x), round2(y)];
    const last = pts[pts.length - 1];
    if (!last || last[0] !== q[0] || last[1] !== q[1]) pts.push(q);
  }
  if (pts.length > 1 && pts[0][0] === pts[pts.length - 1][0] && pts[0][1] === pts[pts.length - 1][1]) pts.pop();
  if (pts.length < 3) return null;
  return { kind: 'polygon', points: pts };
}

/** SVG path data (image coordinates) of an outline; label masks have none (drawn from their pixels). */
export function pathOf(g: CellGeometry): string {
  switch (g.kind) {
    case 'polygon':
    case 'freehand':
      return g.points.map(([x, y], i) => `${i ? 'L' : 'M'}${x} ${y}`).join('') + 'Z';
    case 'rect':
      return `M${g.x} ${g.y}H${g.x + g.width}V${g.y + g.height}H${g.x}Z`;
    case 'ellipse':
      return `M${g.cx - g.rx} ${g.cy}A${g.rx} ${g.ry} 0 1 0 ${g.cx + g.rx} ${g.cy}A${g.rx} ${g.ry} 0 1 0 ${g.cx - g.rx} ${g.cy}Z`;
    case 'label':
    case 'label3d':
      return '';
  }
}

/** Bounding box of an outline (label masks: from their runs, needs the field width). */
export function boundsOf(g: CellGeometry, fieldWidth: number): { x0: number; y0: number; x1: number; y1: number } {
  switch (g.kind) {
    case 'polygon':
    case 'freehand': {
      let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
      for (const [x, y] of g.points) (x0 = Math.min(x0, x)), (y0 = Math.min(y0, y)), (x1 = Math.max(x1, x)), (y1 = Math.max(y1, y));
      return { x0, y0, x1, y1 };
    }
    case 'rect':
      return { x0: g.x, y0: g.y, x1: g.x + g.width, y1: g.y + g.height };
    case 'ellipse':
      return { x0: g.cx - g.rx, y0: g.cy - g.ry, x1: g.cx + g.rx, y1: g.cy + g.ry };
    case 'label':
      return runsBounds(g.rle, fieldWidth);
    case 'label3d': {
      const b = { x0: Infinity, y0: Infinity, x1: -Infinity, y1: -Infinity };
      for (const rle of g.slices) {
        const s = runsBounds(rle, fieldWidth);
        (b.x0 = Math.min(b.x0, s.x0)), (b.y0 = Math.min(b.y0, s.y0)), (b.x1 = Math.max(b.x1, s.x1)), (b.y1 = Math.max(b.y1, s.y1));
      }
      return b;
    }
  }
}

/** Viewer transform: screen = image · scale + (tx, ty). */
export interface View {
  scale: number;
  tx: number;
  ty: number;
}

export const MIN_SCALE = 1 / 64;
export const MAX_SCALE = 64;

export function fitView(imgW: number, imgH: number, boxW: number, boxH: number, pad = 16): View {
  const scale = Math.max(MIN_SCALE, Math.min(MAX_SCALE, Math.min((boxW - 2 * pad) / imgW, (boxH - 2 * pad) / imgH)));
  return { scale, tx: (boxW - imgW * scale) / 2, ty: (boxH - imgH * scale) / 2 };
}

/** Zoom by `factor` keeping the screen point (sx, sy) fixed. */
export function zoomAt(v: View, factor: number, sx: number, sy: number): View {
  const scale = Math.max(MIN_SCALE, Math.min(MAX_SCALE, v.scale * factor));
  const f = scale / v.scale;
  return { scale, tx: sx - (sx - v.tx) * f, ty: sy - (sy - v.ty) * f };
}

export const toImage = (v: View, sx: number, sy: number): Point => [(sx - v.tx) / v.scale, (sy - v.ty) / v.scale];

/**
 * Preview level for the current zoom: the smallest power-of-two side ≥ what is on screen (device pixels),
 * between 256 and the field's largest side (capped at 4096 per request).
 */
export function previewMax(fieldMaxSide: number, scale: number, dpr = 1): number {
  const want = fieldMaxSide * scale * dpr;
  let p = 256;
  while (p < want && p < 4096) p *= 2;
  return Math.min(p, fieldMaxSide <= 4096 ? Math.max(fieldMaxSide, 16) : 4096);
}

/** A "nice" scale-bar length in µm for a bar of about `targetPx` screen pixels. */
export function scaleBar(pixelSizeUm: number, scale: number, targetPx = 120): { um: number; px: number } {
  const umPerScreenPx = pixelSizeUm / scale;
  const raw = targetPx * umPerScreenPx;
  const pow = 10 ** Math.floor(Math.log10(raw));
  const um = [1, 2, 5, 10].map((m) => m * pow).reduce((best, c) => (Math.abs(c - raw) < Math.abs(best - raw) ? c : best));
  return { um, px: um / umPerScreenPx };
}
