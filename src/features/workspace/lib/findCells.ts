/**
 * "Find cells…" in the field's own scale: the defaults, and the conversion between what the dialog shows
 * (µm and µm² when the field's pixel size is known, pixels otherwise) and what the request carries (pixels).
 *
 * Defaults with a known pixel size, for adherent cultured cells (our choice; common practice, no single
 * source): a cell covers 40 to 4,000 µm² (a small rounded cell of about 7 µm across to a large spread one);
 * the image is smoothed with a Gaussian of σ = 1 µm first, so puncta of a few hundred nanometres merge into the
 * cell body instead of being found as "cells"; touching cells are split with seeds at least 8 µm apart (about
 * a cell radius). Without a pixel size the sizes stay in pixels: 30 pixels and up, σ = 2 pixels, seeds 10
 * pixels apart (the earlier pixel defaults, plus light smoothing).
 *
 * Pure functions; tests in tests/workspace/find-cells.test.ts.
 */
import { AutoOutlineRequest } from '@shared/schemas/cells';

export const CELL_DEFAULTS_UM = { minAreaUm2: 40, maxAreaUm2: 4000, smoothingUm: 1, seedDistanceUm: 8 } as const;
export const CELL_DEFAULTS_PX = { minPixels: 30, maxPixels: null, smoothing: 2, seedDistance: 10 } as const;

/** The request schema's bounds, in pixels */
export const SEED_MIN_PX = AutoOutlineRequest.shape.seedDistance.unwrap().minValue!;
export const SEED_MAX_PX = AutoOutlineRequest.shape.seedDistance.unwrap().maxValue!;
export const SMOOTHING_MAX_PX = AutoOutlineRequest.shape.smoothing.unwrap().maxValue!;
const SEED_MIN = SEED_MIN_PX, SEED_MAX = SEED_MAX_PX, SMOOTH_MAX = SMOOTHING_MAX_PX;

/** The unit the dialog shows sizes and distances in. */
export interface Scale {
  /** µm per pixel, or null: everything in pixels */
  pixelSizeUm: number | null;
}

export const areaUnit = (s: Scale) => (s.pixelSizeUm ? 'µm²' : 'pixels');
export const lengthUnit = (s: Scale) => (s.pixelSizeUm ? 'µm' : 'pixels');

/** Shown values (in the dialog's unit) of the defaults. */
export function defaultsFor(s: Scale): { minArea: number; maxArea: number | null; smoothing: number; seedDistance: number } {
  if (s.pixelSizeUm) return { minArea: CELL_DEFAULTS_UM.minAreaUm2, maxArea: CELL_DEFAULTS_UM.maxAreaUm2, smoothing: CELL_DEFAULTS_UM.smoothingUm, seedDistance: CELL_DEFAULTS_UM.seedDistanceUm };
  return { minArea: CELL_DEFAULTS_PX.minPixels, maxArea: CELL_DEFAULTS_PX.maxPixels, smoothing: CELL_DEFAULTS_PX.smoothing, seedDistance: CELL_DEFAULTS_PX.seedDistance };
}

/** An area in the dialog's unit → whole pixels (at least 1). */
export function areaToPixels(area: number, s: Scale): number {
  const px = s.pixelSizeUm ? area / (s.pixelSizeUm * s.pixelSizeUm) : area;
  return Math.max(1, Math.round(px));
}

/** Pixels → an area in the dialog's unit. */
export function pixelsToArea(px: number, s: Scale): number {
  return s.pixelSizeUm ? px * s.pixelSizeUm * s.pixelSizeUm : px;
}

/** A length in the dialog's unit → pixels. */
export function lengthToPixels(len: number, s: Scale): number {
  return s.pixelSizeUm ? len / s.pixelSizeUm : len;
}

export interface FindCellsChoice {
  channel: 'ch1' | 'ch2' | 'sum';
  level: number | null;
  smoothing: number;
  split: boolean;
  seedDistance: number;
  minArea: number;
  maxArea: number | null;
  replace: boolean;
  z?: number | 'mip';
}

/**
 * The request for what the dialog shows. Lengths and areas are converted to pixels; a seed distance or
 * smoothing beyond what the server accepts is refused here with the value quoted (never clipped silently), and
 * a largest size beyond the field becomes "no limit" (nothing larger can be found anyway).
 */
export function requestFor(c: FindCellsChoice, s: Scale, fieldPixels: number): { body: AutoOutlineRequest; error: string | null } {
  const seed = lengthToPixels(c.seedDistance, s);
  const smooth = lengthToPixels(c.smoothing, s);
  const minPixels = areaToPixels(c.minArea, s);
  const maxPx = c.maxArea === null ? null : areaToPixels(c.maxArea, s);
  let error: string | null = null;
  if (c.split && (seed < SEED_MIN || seed > SEED_MAX)) error = `the least distance between cell centres is ${fmt(seed)} pixels here; it must be from ${SEED_MIN} to ${SEED_MAX} pixels`;
  else if (smooth > SMOOTH_MAX) error = `smoothing of ${fmt(smooth)} pixels is more than ${SMOOTH_MAX} pixels`;
  else if (maxPx !== null && maxPx < minPixels) error = `the largest cell (${fmt(c.maxArea!)} ${areaUnit(s)}) is smaller than the smallest (${fmt(c.minArea)} ${areaUnit(s)})`;
  const body: AutoOutlineRequest = {
    channel: c.channel,
    threshold: c.level !== null ? { method: 'manual', level: c.level } : { method: 'otsu' },
    smoothing: smooth,
    fillHoles: true,
    split: c.split,
    ...(c.split ? { seedDistance: Math.min(SEED_MAX, Math.max(SEED_MIN, seed)) } : {}),
    minPixels,
    maxPixels: maxPx === null || maxPx >= fieldPixels ? null : maxPx,
    replace: c.replace,
    ...(c.z !== undefined ? { z: c.z } : {}),
  };
  return { body, error };
}

const fmt = (v: number) => Number(v.toPrecision(4)).toLocaleString('en-US');

/** What a preview found, in the dialog's unit: count and the smallest, median and largest size. */
export function previewSummary(outlines: { pixels: number }[], s: Scale): { count: number; smallest: number; median: number; largest: number } | null {
  if (!outlines.length) return null;
  const a = outlines.map((o) => pixelsToArea(o.pixels, s)).sort((x, y) => x - y);
  const m = a.length >> 1;
  return { count: a.length, smallest: a[0], median: a.length % 2 ? a[m] : (a[m - 1] + a[m]) / 2, largest: a[a.length - 1] };
}
