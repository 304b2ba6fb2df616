/**
 * The viewer's keyboard cursor: a point in image pixel coordinates that the arrow keys move, so outlines can be
 * drawn without a pointer (WCAG 2.1 SC 2.1.1, keyboard). Pure functions; the viewer holds the state.
 */
import type { Point } from './outlineState';
import type { View } from './draw';

/** Screen pixels one arrow press moves the cursor (about a pointer's fine step); Shift moves FAST_FACTOR times as far. */
export const STEP_SCREEN_PX = 4;
export const FAST_FACTOR = 8;

/**
 * Image pixels one arrow press moves at this zoom: whole pixels, at least 1, so the cursor stays on pixel
 * corners and a drawn box covers whole pixels (common practice, our choice).
 */
export function cursorStep(scale: number, fast: boolean): number {
  const step = Math.max(1, Math.round(STEP_SCREEN_PX / scale));
  return fast ? step * FAST_FACTOR : step;
}

const ARROWS: Record<string, [number, number]> = { ArrowLeft: [-1, 0], ArrowRight: [1, 0], ArrowUp: [0, -1], ArrowDown: [0, 1] };

export const isArrow = (key: string) => key in ARROWS;

/** The cursor after an arrow key, kept on the image ([0, W] × [0, H], pixel corners included). */
export function moveCursor(p: Point, key: string, step: number, W: number, H: number): Point {
  const d = ARROWS[key];
  if (!d) throw new Error(`moveCursor: not an arrow key: "${key}"`);
  return clampToImage([p[0] + d[0] * step, p[1] + d[1] * step], W, H);
}

export function clampToImage(p: Point, W: number, H: number): Point {
  return [Math.min(W, Math.max(0, p[0])), Math.min(H, Math.max(0, p[1]))];
}

/** Where the cursor starts: the image point at the middle of the viewer, on a whole pixel corner. */
export function startCursor(v: View, boxW: number, boxH: number, W: number, H: number): Point {
  return clampToImage([Math.round((boxW / 2 - v.tx) / v.scale), Math.round((boxH / 2 - v.ty) / v.scale)], W, H);
}

/** The view panned just enough that the cursor is at least `margin` screen pixels inside the viewer (unchanged when it is). */
export function followCursor(v: View, p: Point, boxW: number, boxH: number, margin = 24): View {
  const sx = p[0] * v.scale + v.tx, sy = p[1] * v.scale + v.ty;
  let { tx, ty } = v;
  if (sx < margin) tx += margin - sx;
  else if (sx > boxW - margin) tx -= sx - (boxW - margin);
  if (sy < margin) ty += margin - sy;
  else if (sy > boxH - margin) ty -= sy - (boxH - margin);
  return tx === v.tx && ty === v.ty ? v : { ...v, tx, ty };
}
