/**
 * How a cell was made, in words: a short label for the Cells list and the settings of "Find cells…" spelled
 * out with their units (pixels, and µm / µm² when the field's pixel size was known). The methods paragraph of
 * reports (shared/reports/methods.ts) builds its outline sentences from the same pieces.
 */
import type { CellOrigin, FoundWith } from '../schemas/cells.js';

/** A length or size with few digits: "0.75", "12", "1,340". */
export function formatAmount(v: number): string {
  const a = Math.abs(v);
  const digits = a === 0 || a >= 100 ? 0 : a >= 10 ? 1 : a >= 1 ? 2 : 3;
  return Number(v.toFixed(digits)).toLocaleString('en-US', { maximumFractionDigits: digits });
}

/** "6 pixels (3 µm)" — a distance in pixels, with µm when the pixel size is known. */
export function pixelsAndMicrons(px: number, pixelSizeUm: number | null): string {
  const p = `${formatAmount(px)} ${px === 1 ? 'pixel' : 'pixels'}`;
  return pixelSizeUm ? `${p} (${formatAmount(px * pixelSizeUm)} µm)` : p;
}

/** "100 pixels (25 µm²)" — an area in pixels, with µm² when the pixel size is known. */
export function areaWords(px: number, pixelSizeUm: number | null): string {
  const p = `${Math.round(px).toLocaleString('en-US')} ${px === 1 ? 'pixel' : 'pixels'}`;
  return pixelSizeUm ? `${p} (${formatAmount(px * pixelSizeUm * pixelSizeUm)} µm²)` : p;
}

export const CHANNEL_WORDS: Record<FoundWith['channel'], string> = { ch1: 'channel 1', ch2: 'channel 2', sum: 'the sum of both channels' };

/** The size window of found cells in words: "of 100 to 2,000 pixels (25 to 500 µm²)" / "of at least …". */
export function sizeWindowWords(s: Pick<FoundWith, 'minPixels' | 'maxPixels' | 'pixelSizeUm'>): string {
  const u = s.pixelSizeUm;
  if (s.maxPixels === null) return `of at least ${areaWords(s.minPixels, u)}`;
  if (!u) return `of ${s.minPixels.toLocaleString('en-US')} to ${s.maxPixels.toLocaleString('en-US')} pixels`;
  return `of ${s.minPixels.toLocaleString('en-US')} to ${s.maxPixels.toLocaleString('en-US')} pixels (${formatAmount(s.minPixels * u * u)} to ${formatAmount(s.maxPixels * u * u)} µm²)`;
}

/** The steps of "Find cells…" in words, without the level (which differs per field with Otsu). */
export function foundStepsWords(s: FoundWith): string[] {
  const out = [
    s.smoothing > 0 ? `${CHANNEL_WORDS[s.channel]}, smoothed with a Gaussian of σ = ${pixelsAndMicrons(s.smoothing, s.pixelSizeUm)}` : `${CHANNEL_WORDS[s.channel]}, unsmoothed`,
    s.method === 'otsu' ? "thresholded at Otsu's level of the intensities clipped at their 99.5th percentile" : `thresholded at a level set by hand`,
  ];
  if (s.fillHoles) out.push('holes filled');
  out.push(s.split ? `touching cells split by a distance-transform watershed with seeds at least ${pixelsAndMicrons(s.seedDistance, s.pixelSizeUm)} apart` : 'touching cells not split');
  out.push(`objects kept ${sizeWindowWords(s)}`);
  return out;
}

/** Every setting of "Find cells…" in one line, level included (the Cells list's tooltip). */
export function foundWithWords(s: FoundWith): string {
  const z = s.z === null ? '' : s.z === 'mip' ? '; maximum-intensity projection of the stack' : `; slice ${s.z + 1} of the stack`;
  return `${foundStepsWords(s).join('; ')}; level ${formatAmount(s.level)} intensity units${z}`;
}

/** Short label for the Cells list: "drawn", "found automatically, edited by hand", "imported (labels.tif, label 3)". */
export function originLabel(o: CellOrigin): string {
  switch (o.how) {
    case 'drawn':
      return 'drawn';
    case 'demo':
      return 'demo outline';
    case 'imported': {
      const what = o.file ? ` (${o.file}${o.label !== null ? `, label ${o.label}` : ''})` : '';
      return `imported${what}${o.edited ? ', edited by hand' : ''}`;
    }
    case 'found':
      return `found automatically${o.edited ? ', edited by hand' : ''}`;
  }
}

/** The longer description (tooltip): the label plus the settings of a found cell, when recorded. */
export function originDetail(o: CellOrigin): string {
  if (o.how !== 'found') return originLabel(o);
  return o.settings ? `${originLabel(o)}: ${foundWithWords(o.settings)}` : `${originLabel(o)} (settings not recorded)`;
}
