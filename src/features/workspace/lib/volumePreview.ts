/**
 * How much of a stack the browser's Pixel scatter and live preview hold. Over a whole volume (every slice, voxel
 * by voxel, as runs measure a stack by default) the worker keeps both channels of every slice in their own
 * sample type; slices arrive one at a time with a progress bar. Beyond VOLUME_PREVIEW_MAX_BYTES the preview
 * stays on the shown slice (runs still measure every slice): the worker's copy plus the region's pairs and
 * level structures must fit a browser tab comfortably.
 */

/** Largest stack (both channels, as stored) the preview holds whole: 250 MB (a 1024 × 1024 × 32 16-bit stack is 134 MB). */
export const VOLUME_PREVIEW_MAX_BYTES = 250_000_000;

/** Bytes of one sample as the pixels endpoint sends it (8-bit 1, up to 16-bit 2, 32-bit and float 4). */
export function sampleBytes(f: { bitDepth: number; sampleFormat: 'uint' | 'float' }): number {
  if (f.sampleFormat === 'float') return 4;
  return f.bitDepth <= 8 ? 1 : f.bitDepth <= 16 ? 2 : 4;
}

/** Bytes of both channels of every slice. */
export function volumeBytes(f: { width: number; height: number; sizeZ: number; bitDepth: number; sampleFormat: 'uint' | 'float' }): number {
  return 2 * f.width * f.height * f.sizeZ * sampleBytes(f);
}

/** Whether the whole volume fits the preview. */
export const volumeFits = (f: Parameters<typeof volumeBytes>[0]) => f.sizeZ > 1 && volumeBytes(f) <= VOLUME_PREVIEW_MAX_BYTES;

/** "12.5 MB" (decimal megabytes, one decimal below 100). */
export function megabytes(bytes: number): string {
  const mb = bytes / 1e6;
  return `${mb >= 100 ? mb.toFixed(0) : mb.toFixed(1)} MB`;
}

/**
 * Most voxels the whole field is previewed over in 3D (no cell selected): 8 M (e.g. 512 × 512 × 32). Above it
 * the whole field's scatter takes seconds of the worker (33.5 M voxels ≈ 5 s of CPU,
 * tests/bench/workspace-volume.bench.ts), so without a selected cell the slice shown is used; cells still get
 * their whole volume.
 */
export const WHOLE_FIELD_3D_MAX_VOXELS = 8_000_000;

/** Whether the whole field (no cell selected) is previewed over every slice. */
export const wholeFieldIn3d = (f: { width: number; height: number; sizeZ: number }) => f.width * f.height * f.sizeZ <= WHOLE_FIELD_3D_MAX_VOXELS;
