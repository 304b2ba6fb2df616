/**
 * Run-length codes of label-image cells: the one encoder (`encodeRuns`) and the one decoder (`decodeRuns`).
 *
 * A code is a flat array [start, length, start, length, …] over linear pixel indices (y·width + x) of a
 * width × height field in row-major order (common practice for exact region masks). A valid code has an even
 * length; every start is an integer ≥ 0 and every length an integer ≥ 1; runs are sorted and do not overlap
 * (a run may begin where the previous one ends); and, when the field size is known, the last pixel of every run
 * is inside it. Anything else is rejected with a RunLengthError that quotes the offending run.
 */

export class RunLengthError extends RangeError {
  override name = 'RunLengthError';
}

const isCount = (v: unknown): v is number => typeof v === 'number' && Number.isInteger(v);

function checkTotal(pixelTotal: number) {
  if (!isCount(pixelTotal) || pixelTotal < 1) throw new RunLengthError(`the field size must be a positive whole number of pixels, got ${JSON.stringify(pixelTotal)}`);
}

/**
 * Checks a run-length code and returns its pixel count. `pixelTotal` (width × height) adds the bounds check;
 * without it only the structure is checked (e.g. in a schema that does not know the field).
 */
export function checkRuns(rle: ArrayLike<number>, pixelTotal?: number): number {
  if (pixelTotal !== undefined) checkTotal(pixelTotal);
  if (rle.length % 2 !== 0) throw new RunLengthError(`a run-length code has an even number of entries [start, length, …], got ${rle.length}`);
  let count = 0;
  let prevEnd = 0;
  for (let r = 0; r < rle.length; r += 2) {
    const s = rle[r], len = rle[r + 1];
    const which = `bad run ${r / 2} (start ${JSON.stringify(s)}, length ${JSON.stringify(len)})`;
    if (!isCount(s) || s < 0) throw new RunLengthError(`${which}: the start must be a whole number ≥ 0`);
    if (!isCount(len) || len < 1) throw new RunLengthError(`${which}: the length must be a whole number ≥ 1`);
    if (s < prevEnd) throw new RunLengthError(`${which}: runs must be sorted and not overlap, but the previous run ends at ${prevEnd}`);
    if (pixelTotal !== undefined && s + len > pixelTotal) throw new RunLengthError(`${which}: ends at pixel ${s + len - 1}, beyond the field's ${pixelTotal} pixels`);
    prevEnd = s + len;
    count += len;
  }
  return count;
}

/** Decodes a run-length code into ascending linear pixel indices, after `checkRuns(rle, pixelTotal)`. */
export function decodeRuns(rle: ArrayLike<number>, pixelTotal: number): Uint32Array {
  const out = new Uint32Array(checkRuns(rle, pixelTotal));
  let k = 0;
  for (let r = 0; r < rle.length; r += 2) for (let i = rle[r], end = rle[r] + rle[r + 1]; i < end; i++) out[k++] = i;
  return out;
}

/**
 * Encodes strictly ascending linear pixel indices inside a field of `pixelTotal` pixels as the shortest
 * run-length code (adjacent pixels join one run). Unsorted, repeated, fractional or out-of-field indices are
 * rejected, naming the index.
 */
export function encodeRuns(indices: ArrayLike<number>, pixelTotal: number): number[] {
  checkTotal(pixelTotal);
  const rle: number[] = [];
  let prev = -1;
  for (let i = 0; i < indices.length; i++) {
    const v = indices[i];
    if (!isCount(v) || v < 0 || v >= pixelTotal) throw new RunLengthError(`pixel index ${JSON.stringify(v)} (entry ${i}) is not a pixel of a field of ${pixelTotal} pixels`);
    if (v <= prev) throw new RunLengthError(`pixel indices must be strictly ascending, got ${v} after ${prev} (entry ${i})`);
    if (v === prev + 1 && rle.length > 0) rle[rle.length - 1]++;
    else rle.push(v, 1);
    prev = v;
  }
  return rle;
}

/** Whether linear pixel index `i` lies in a checked run-length code: binary search over its sorted runs. */
export function runsContain(rle: ArrayLike<number>, i: number): boolean {
  let lo = 0;
  let hi = rle.length / 2 - 1;
  while (lo <= hi) {
    const m = (lo + hi) >> 1;
    const s = rle[2 * m];
    if (i < s) hi = m - 1;
    else if (i >= s + rle[2 * m + 1]) lo = m + 1;
    else return true;
  }
  return false;
}

/**
 * The pixel-edge bounding box [x0, x1) × [y0, y1) of a checked run-length code in a field `width` pixels wide,
 * without decoding it (a run that wraps a row spans the whole width). An empty code has an empty box (Infinity).
 */
export function runsBounds(rle: ArrayLike<number>, width: number): { x0: number; y0: number; x1: number; y1: number } {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (let k = 0; k < rle.length; k += 2) {
    const s = rle[k], e = s + rle[k + 1] - 1;
    const ys = Math.floor(s / width), ye = Math.floor(e / width);
    y0 = Math.min(y0, ys);
    y1 = Math.max(y1, ye + 1);
    if (ys === ye) (x0 = Math.min(x0, s % width)), (x1 = Math.max(x1, (e % width) + 1));
    else (x0 = 0), (x1 = width);
  }
  return { x0, y0, x1, y1 };
}
