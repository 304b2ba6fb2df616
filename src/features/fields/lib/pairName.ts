/**
 * The name a pair of single-channel files gets as one field: what their names share ("cell3_ch1.tif" and
 * "cell3_ch2.tif" → "cell3"), else both names ("gfp.tif" and "rfp.tif" → "gfp + rfp"), so a field is never
 * named after its channel 1 file alone.
 */
export const stem = (n: string) => n.replace(/(\.ome)?\.tiff?$/i, '');

const SEP = /[\s._\-–·+()]/;
/** separators trimmed from the shared part's ends */
const EDGE = /^[\s._\-–·+]+|[\s._\-–·+(]+$/g;

export function pairName(a: string, b: string): string {
  const x = stem(a), y = stem(b);
  if (x === y) return x;
  let p = 0;
  while (p < x.length && p < y.length && x[p] === y[p]) p++;
  let s = 0;
  while (s < x.length - p && s < y.length - p && x[x.length - 1 - s] === y[y.length - 1 - s]) s++;
  // whole words only: a shared part ending inside a word ("cell3_ch" of "cell3_ch1") is cut back to its last separator
  const sep = (c: string | undefined) => c === undefined || SEP.test(c);
  if (!sep(x[p]) || !sep(y[p])) while (p > 0 && !sep(x[p - 1])) p--;
  let from = x.length - s;
  if (s > 0 && (!sep(x[from - 1]) || !sep(y[y.length - s - 1]))) while (from < x.length && !sep(x[from])) from++;
  // the shared start, the shared end, or both around the part that differs ("c3_ch1_z0" / "c3_ch2_z0" → "c3_z0")
  const end = x.slice(from);
  const shared = `${x.slice(0, p)}${end ? `_${end}` : ''}`.replace(/_+/g, '_').replace(/[\s._\-–·+]{2,}/g, (m) => m[0]).replace(EDGE, '');
  // a shared part of fewer than 3 characters ("c", "_") says nothing about the field
  return shared.replace(/[\s._\-–·+]/g, '').length >= 3 ? shared : `${x} + ${y}`;
}
