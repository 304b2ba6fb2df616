/** The viewer's keyboard cursor (pure): step per zoom, moves kept on the image, start point, panning to follow. (common practice) */
import { describe, expect, it } from 'vitest';
import { cursorStep, followCursor, moveCursor, startCursor, FAST_FACTOR, isArrow } from '../../src/features/workspace/lib/keyCursor';

describe('keyboard cursor', () => {
  it('steps whole image pixels, about 4 screen pixels at any zoom, Shift eight times as far', () => {
    expect(cursorStep(1, false)).toBe(4);
    expect(cursorStep(0.5, false)).toBe(8);
    expect(cursorStep(8, false)).toBe(1); // never below one pixel
    expect(cursorStep(1, true)).toBe(4 * FAST_FACTOR);
    for (const s of [0.07, 0.3, 1.7, 3, 40]) expect(Number.isInteger(cursorStep(s, false))).toBe(true);
  });
  it('moves by the step and stays on the image, corners included', () => {
    expect(moveCursor([10, 10], 'ArrowRight', 4, 100, 50)).toEqual([14, 10]);
    expect(moveCursor([10, 10], 'ArrowUp', 4, 100, 50)).toEqual([10, 6]);
    expect(moveCursor([2, 48], 'ArrowLeft', 4, 100, 50)).toEqual([0, 48]);
    expect(moveCursor([2, 48], 'ArrowDown', 4, 100, 50)).toEqual([2, 50]);
    expect(moveCursor([100, 0], 'ArrowRight', 4, 100, 50)).toEqual([100, 0]);
    expect(() => moveCursor([0, 0], 'Enter', 1, 10, 10)).toThrow(/"Enter"/);
    expect(isArrow('ArrowLeft') && !isArrow('a')).toBe(true);
  });
  it('starts at the image point under the middle of the viewer, on a pixel corner', () => {
    expect(startCursor({ scale: 2, tx: 0, ty: 0 }, 200, 100, 1000, 1000)).toEqual([50, 25]);
    expect(startCursor({ scale: 1, tx: 500, ty: 500 }, 200, 100, 1000, 1000)).toEqual([0, 0]); // image off to the right: clamped
  });
  it('pans just enough to keep the cursor inside the margin, and not at all when it is inside', () => {
    const v = { scale: 1, tx: 0, ty: 0 };
    expect(followCursor(v, [50, 50], 200, 100)).toBe(v);
    expect(followCursor(v, [190, 50], 200, 100)).toEqual({ scale: 1, tx: -14, ty: 0 });
    expect(followCursor(v, [50, 5], 200, 100)).toEqual({ scale: 1, tx: 0, ty: 19 });
  });
});
