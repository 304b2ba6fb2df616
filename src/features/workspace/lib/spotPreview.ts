/**
 * Live spot detection for the workspace (run in the scatter's Web Worker): the engine's own detector
 * (shared/analysis/spots.ts, the code runs use) on the shown slice's raw pixels, in the selected cell or the
 * whole field, at the σ and k of the sliders. Runs give the numbers that count; this shows what a setting finds.
 */
import { detectSpots } from '@shared/analysis/spots';
import { cellIndices, type CellGeometry } from '@shared/schemas/cells';
import type { SampleArray } from '@shared/pixels/codec';
import type { Xy } from './spotView';

export interface SpotPreview {
  spots1: Xy[];
  spots2: Xy[];
  /** pixels searched (the cell, or the whole field) */
  pixels: number;
}

export function previewSpots(img: { width: number; height: number; ch1: SampleArray; ch2: SampleArray }, geometry: CellGeometry | null, sigma: number, k: number): SpotPreview {
  const indices = geometry ? cellIndices(geometry, img.width, img.height) : null;
  const one = (ch: SampleArray): Xy[] => (detectSpots(ch, img.width, img.height, indices, { sigma, k })?.spots ?? []).map((s) => [s.x, s.y]);
  return { spots1: one(img.ch1), spots2: one(img.ch2), pixels: indices ? indices.length : img.width * img.height };
}
