/// <reference lib="webworker" />
/**
 * Web Worker of the pixel scatter: keeps the field's pixels, prepares the selected region once, answers
 * threshold drags with a new histogram + quadrant counts, and computes the live coefficient preview.
 */
import { livePreview, prepareRegion, regionStream, scatter, volumeAssembly, type Region, type ScatterInput } from './scatterCore';
import { previewSpots } from './spotPreview';
import type { Xy } from './spotView';
import type { CellGeometry } from '@shared/schemas/cells';
import type { SampleArray } from '@shared/pixels/codec';
import type { SaturatedMarks, ThresholdBasis } from './scatterBasis';
import { compositePlane, displayRange, renderComposite } from './composite';

export type ScatterRequest =
  | { type: 'pixels'; width: number; height: number; ch1: SampleArray; ch2: SampleArray; saturationLevel: number | null }
  /** a whole volume arrives slice by slice (volume-begin, then one volume-slice per slice, in any order) */
  | { type: 'volume-begin'; width: number; height: number; depth: number; saturationLevel: number | null }
  | { type: 'volume-slice'; z: number; ch1: SampleArray; ch2: SampleArray }
  /** a stack too large to hold whole: only one cell's voxels are kept from the slices that follow (volume-slice) */
  | { type: 'stream-begin'; width: number; height: number; depth: number; geometry: CellGeometry; saturationLevel: number | null; maxBytes: number }
  | { type: 'update'; seq: number; regionKey: string; geometry: CellGeometry | null; t1: number | null; t2: number | null; measure: boolean; cells: CellGeometry[] }
  /** live spot detection at the sliders' σ and k (spotPreview.ts) */
  | { type: 'spots'; seq: number; regionKey: string; geometry: CellGeometry | null; sigma: number; k: number }
  /** the composite with channel 2 as recorded (shift null) or aligned by the shift (composite.ts) */
  | { type: 'composite'; seq: number; slot: string; shift: { dx: number; dy: number } | null; ranges?: [[number, number], [number, number]] };

export type ScatterReply =
  | { type: 'scatter'; seq: number; regionKey: string; n: number; bins: number; counts: Uint32Array | null; max: number; outside: number; dataMax: [number, number]; rangeX: [number, number]; rangeY: [number, number]; t1: number; t2: number; otsu: { t1: number | null; t2: number | null }; quadrants: { both: number; only1: number; only2: number; neither: number }; saturated: { ch1: number | null; ch2: number | null }; basis: ThresholdBasis; saturatedMarks: Omit<SaturatedMarks, 'marks'> & { marks: Uint8Array | null }; ms: number }
  | { type: 'measure'; seq: number; regionKey: string; result: import('@shared/analysis/types').RegionResult; ms: number }
  | { type: 'spots'; seq: number; regionKey: string; sigma: number; k: number; spots1: Xy[]; spots2: Xy[]; pixels: number; ms: number }
  | { type: 'composite'; seq: number; slot: string; shift: { dx: number; dy: number } | null; width: number; height: number; rgba: Uint8ClampedArray; ms: number }
  | { type: 'error'; seq: number; message: string; spots?: boolean; composite?: string };

let img: ScatterInput | null = null;
let region: { key: string; r: Region } | null = null;
let ranges: [[number, number], [number, number]] | null = null;
/** a volume (or one cell's voxels of it) being assembled from its slices */
let loading: ReturnType<typeof volumeAssembly> | ReturnType<typeof regionStream> | null = null;

self.onmessage = (e: MessageEvent<ScatterRequest>) => {
  const m = e.data;
  if (m.type === 'pixels') {
    img = { width: m.width, height: m.height, ch1: m.ch1, ch2: m.ch2, saturationLevel: m.saturationLevel };
    region = null;
    ranges = null;
    return;
  }
  if (m.type === 'composite') {
    try {
      if (!img) throw new Error('pixels not loaded yet');
      const t0 = performance.now();
      // a 2-D view of one slice: refused when this worker holds a whole volume or one cell's voxels
      const plane = compositePlane(img);
      ranges ??= [displayRange(plane.ch1), displayRange(plane.ch2)];
      const c = renderComposite(plane, m.shift, m.ranges ?? ranges);
      (self as unknown as Worker).postMessage({ type: 'composite', seq: m.seq, slot: m.slot, shift: m.shift, ...c, ms: performance.now() - t0 } satisfies ScatterReply, [c.rgba.buffer]);
    } catch (err) {
      (self as unknown as Worker).postMessage({ type: 'error', seq: m.seq, message: (err as Error).message, composite: m.slot } satisfies ScatterReply);
    }
    return;
  }
  if (m.type === 'volume-begin') {
    img = null;
    region = null;
    ranges = null;
    loading = volumeAssembly(m.width, m.height, m.depth, m.saturationLevel);
    return;
  }
  if (m.type === 'stream-begin') {
    img = null;
    region = null;
    ranges = null;
    loading = regionStream(m.width, m.height, m.depth, m.geometry, m.saturationLevel, m.maxBytes);
    return;
  }
  if (m.type === 'volume-slice') {
    if (!loading) return;
    try {
      loading.put(m.z, m.ch1, m.ch2);
    } catch (err) {
      (self as unknown as Worker).postMessage({ type: 'error', seq: 0, message: (err as Error).message } satisfies ScatterReply);
      return;
    }
    img = loading.image();
    if (img) loading = null;
    return;
  }
  if (m.type === 'spots') {
    try {
      if (!img) throw new Error('pixels not loaded yet');
      const t0 = performance.now();
      const p = previewSpots(img, m.geometry, m.sigma, m.k);
      (self as unknown as Worker).postMessage({ type: 'spots', seq: m.seq, regionKey: m.regionKey, sigma: m.sigma, k: m.k, ...p, ms: performance.now() - t0 } satisfies ScatterReply);
    } catch (err) {
      (self as unknown as Worker).postMessage({ type: 'error', seq: m.seq, message: (err as Error).message, spots: true } satisfies ScatterReply);
    }
    return;
  }
  try {
    if (!img) throw new Error('pixels not loaded yet');
    const t0 = performance.now();
    const fresh = !region || region.key !== m.regionKey;
    if (fresh) region = { key: m.regionKey, r: prepareRegion(img, m.geometry, 256, m.cells) };
    const r = region!.r;
    const t1 = m.t1 ?? r.otsu.t1 ?? 0;
    const t2 = m.t2 ?? r.otsu.t2 ?? 0;
    const s = scatter(r, t1, t2);
    const reply: ScatterReply = {
      type: 'scatter',
      seq: m.seq,
      regionKey: m.regionKey,
      n: s.n,
      bins: s.hist.binsX,
      // the histogram travels once per region; threshold drags only send the quadrant counts
      counts: fresh ? s.hist.counts.slice() : null,
      max: s.hist.max,
      outside: s.hist.outside,
      dataMax: [r.max1, r.max2],
      rangeX: s.hist.rangeX,
      rangeY: s.hist.rangeY,
      t1,
      t2,
      otsu: r.otsu,
      quadrants: s.quadrants,
      saturated: r.saturated,
      basis: r.basis,
      saturatedMarks: { ...r.saturatedMarks, marks: fresh ? r.saturatedMarks.marks.slice() : null },
      ms: performance.now() - t0,
    };
    (self as unknown as Worker).postMessage(reply, reply.counts ? [reply.counts.buffer, reply.saturatedMarks.marks!.buffer] : []);
    if (m.measure) {
      const t2m = performance.now();
      const result = livePreview(r, t1, t2);
      (self as unknown as Worker).postMessage({ type: 'measure', seq: m.seq, regionKey: m.regionKey, result, ms: performance.now() - t2m } satisfies ScatterReply);
    }
  } catch (err) {
    (self as unknown as Worker).postMessage({ type: 'error', seq: m.seq, message: (err as Error).message } satisfies ScatterReply);
  }
};
