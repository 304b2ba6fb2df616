/**
 * The pixel scatter's Web Worker from React: sends the field's pixels once (one slice, or a whole volume
 * fetched slice by slice with progress), then "latest request wins" updates (a request sent while the worker
 * is busy replaces any other waiting one).
 */
import { useEffect, useRef, useState } from 'react';
import { zRangeOf, type CellGeometry } from '@shared/schemas/cells';
import type { RegionResult } from '@shared/analysis/types';
import type { PixelPlanes } from '@shared/pixels/codec';
import type { ScatterReply, ScatterRequest } from './scatter.worker';
import { fetchFieldPixels } from '@/features/fields';

/** A whole stack for the scatter, fetched one slice at a time (GET /api/fields/:id/pixels?z=k) straight into the worker. */
export interface VolumeSource {
  kind: 'volume';
  fieldId: number;
  width: number;
  height: number;
  depth: number;
}
/**
 * One cell's voxels of a stack too large to hold whole: the slices of its z range fetched one by one, of each
 * only the cell's voxels kept in the worker (scatterCore.ts regionStream).
 */
export interface StreamSource {
  kind: 'stream';
  fieldId: number;
  width: number;
  height: number;
  depth: number;
  geometry: CellGeometry;
  /** the most bytes of voxel values kept */
  maxBytes: number;
}
export type ScatterSource = PixelPlanes | VolumeSource | StreamSource;

type ScatterMessage = Extract<ScatterReply, { type: 'scatter' }>;
export type ScatterView = ScatterMessage & { counts: Uint32Array; saturatedMarks: ScatterMessage['saturatedMarks'] & { marks: Uint8Array } };
export interface LiveResult {
  regionKey: string;
  result: RegionResult;
  t1: number;
  t2: number;
  ms: number;
}

export type SpotPreviewView = Extract<ScatterReply, { type: 'spots' }>;
/** A composite drawn by the worker (composite.ts): channel 2 as recorded (shift null) or aligned. */
export type CompositeView = Extract<ScatterReply, { type: 'composite' }>;

export function useScatter(pixels: ScatterSource | undefined, saturationLevel: number | null) {
  const worker = useRef<Worker | null>(null);
  const busy = useRef(false);
  const waiting = useRef<Extract<ScatterRequest, { type: 'update' }> | null>(null);
  const seq = useRef(0);
  const countsByRegion = useRef(new Map<string, { counts: Uint32Array; marks: Uint8Array }>());
  const lastThresholds = useRef<{ t1: number; t2: number }>({ t1: 0, t2: 0 });
  const [view, setView] = useState<ScatterView | null>(null);
  const [live, setLive] = useState<LiveResult | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [ready, setReady] = useState(false);
  /** slices of a volume in the worker so far (null for one slice) */
  const [progress, setProgress] = useState<{ done: number; total: number } | null>(null);
  // live spot detection: its own "latest request wins" slot, so slider moves never queue up
  const spotsBusy = useRef(false);
  const spotsWaiting = useRef<Extract<ScatterRequest, { type: 'spots' }> | null>(null);
  const [spots, setSpots] = useState<SpotPreviewView | null>(null);
  const [spotsError, setSpotsError] = useState<string | null>(null);
  // composites per slot (the alignment panel, the main image): each slot's latest request wins
  const [composites, setComposites] = useState<Record<string, CompositeView>>({});
  const [compositeErrors, setCompositeErrors] = useState<Record<string, string>>({});

  useEffect(() => {
    if (!pixels) return;
    const w = new Worker(new URL('./scatter.worker.ts', import.meta.url), { type: 'module' });
    worker.current = w;
    countsByRegion.current.clear();
    setComposites({});
    const abort = new AbortController();
    if ('kind' in pixels) {
      // slice by slice: the browser never holds more than one slice besides the worker's volume
      const v = pixels;
      let [from, to] = [0, v.depth - 1];
      if (v.kind === 'stream') {
        [from, to] = zRangeOf(v.geometry, v.depth).map((k) => k - 1);
        to = Math.min(to, v.depth - 1);
        w.postMessage({ type: 'stream-begin', width: v.width, height: v.height, depth: v.depth, geometry: v.geometry, saturationLevel, maxBytes: v.maxBytes } satisfies ScatterRequest);
      } else w.postMessage({ type: 'volume-begin', width: v.width, height: v.height, depth: v.depth, saturationLevel } satisfies ScatterRequest);
      const total = to - from + 1;
      setProgress({ done: 0, total });
      void (async () => {
        for (let z = from; z <= to; z++) {
          const s = await fetchFieldPixels(v.fieldId, z, abort.signal);
          if (abort.signal.aborted) return;
          if (s.width !== v.width || s.height !== v.height) throw new Error(`slice ${z + 1} is ${s.width} × ${s.height} pixels, not ${v.width} × ${v.height}`);
          w.postMessage({ type: 'volume-slice', z, ch1: s.ch1, ch2: s.ch2 } satisfies ScatterRequest, [s.ch1.buffer, s.ch2.buffer]);
          setProgress({ done: z - from + 1, total });
        }
        setReady(true);
      })().catch((e: Error) => {
        if (!abort.signal.aborted) setError(`The slices could not be loaded: ${e.message}`);
      });
    } else {
      const ch1 = pixels.ch1.slice();
      const ch2 = pixels.ch2.slice();
      w.postMessage({ type: 'pixels', width: pixels.width, height: pixels.height, ch1, ch2, saturationLevel } satisfies ScatterRequest, [ch1.buffer, ch2.buffer]);
      setProgress(null);
    }
    const pump = () => {
      const next = waiting.current;
      if (!next) return;
      waiting.current = null;
      busy.current = true;
      w.postMessage(next);
    };
    const pumpSpots = () => {
      const next = spotsWaiting.current;
      spotsBusy.current = !!next;
      if (!next) return;
      spotsWaiting.current = null;
      w.postMessage(next);
    };
    w.onmessage = (e: MessageEvent<ScatterReply>) => {
      const m = e.data;
      if (m.type === 'composite' || (m.type === 'error' && m.composite)) {
        // drawings answer in order; only the latest asked for in each slot is kept
        const slot = m.type === 'composite' ? m.slot : m.composite!;
        if (m.seq !== compositeSeq.current[slot]) return;
        if (m.type === 'composite') {
          setComposites((c) => ({ ...c, [slot]: m }));
          setCompositeErrors(({ [slot]: _gone, ...rest }) => rest);
        } else setCompositeErrors((c) => ({ ...c, [slot]: m.message }));
        return;
      }
      if (m.type === 'spots' || (m.type === 'error' && m.spots)) {
        if (m.type === 'spots') {
          setSpots(m);
          setSpotsError(null);
        } else setSpotsError(m.message);
        pumpSpots();
        return;
      }
      if (m.type === 'scatter') {
        if (m.counts && m.saturatedMarks.marks) countsByRegion.current.set(m.regionKey, { counts: m.counts, marks: m.saturatedMarks.marks });
        const kept = countsByRegion.current.get(m.regionKey);
        lastThresholds.current = { t1: m.t1, t2: m.t2 };
        if (kept) setView({ ...m, counts: kept.counts, saturatedMarks: { ...m.saturatedMarks, marks: kept.marks } });
        setError(null);
        // a measure reply follows when asked for; otherwise the worker is free now
        if (!pendingMeasure.current.has(m.seq)) {
          busy.current = false;
          pump();
        }
      } else if (m.type === 'measure') {
        pendingMeasure.current.delete(m.seq);
        setLive({ regionKey: m.regionKey, result: m.result, ms: m.ms, ...lastThresholds.current });
        busy.current = false;
        pump();
      } else {
        pendingMeasure.current.delete(m.seq);
        setError(m.message);
        busy.current = false;
        pump();
      }
    };
    w.onerror = (e) => setError(e.message || 'the scatter worker failed');
    if (!('kind' in pixels)) setReady(true);
    return () => {
      abort.abort();
      w.terminate();
      worker.current = null;
      busy.current = false;
      waiting.current = null;
      spotsBusy.current = false;
      spotsWaiting.current = null;
      setReady(false);
    };
  }, [pixels, saturationLevel]);

  const pendingMeasure = useRef(new Set<number>());
  const compositeSeq = useRef<Record<string, number>>({});

  /**
   * Draw the composite with channel 2 as recorded (null) or aligned by the shift, into a slot (each slot's
   * latest request wins); `ranges` are the shown intensities per channel (default: the 0.1–99.9 percentiles).
   * A composite is a 2-D view of one slice: a worker holding a whole volume or one cell's voxels answers with an
   * error in the slot (composite.ts compositePlane), so ask the shown slice's worker.
   */
  const requestComposite = (shift: { dx: number; dy: number } | null, slot = 'panel', ranges?: [[number, number], [number, number]]) => {
    const w = worker.current;
    if (!w) return;
    compositeSeq.current[slot] = ++seq.current;
    w.postMessage({ type: 'composite', seq: seq.current, slot, shift, ranges } satisfies ScatterRequest);
  };

  /**
   * Ask for the scatter of a region (null geometry = whole field); `measure` adds the live coefficients.
   * `cells` are the field's outlined cells, over which the whole field's default thresholds are computed; the
   * region key must change when they do.
   */
  const request = (regionKey: string, geometry: CellGeometry | null, t1: number | null, t2: number | null, measure: boolean, cells: CellGeometry[]) => {
    const w = worker.current;
    if (!w) return;
    const msg: Extract<ScatterRequest, { type: 'update' }> = { type: 'update', seq: ++seq.current, regionKey, geometry, t1, t2, measure, cells: geometry ? [] : cells };
    if (measure) pendingMeasure.current.add(msg.seq);
    if (waiting.current?.measure) pendingMeasure.current.delete(waiting.current.seq);
    waiting.current = msg;
    if (!busy.current) {
      waiting.current = null;
      busy.current = true;
      w.postMessage(msg);
    }
  };

  /** Live spot detection in a region (null geometry = whole field) at σ, k. */
  const requestSpots = (regionKey: string, geometry: CellGeometry | null, sigma: number, k: number) => {
    const w = worker.current;
    if (!w) return;
    const msg: Extract<ScatterRequest, { type: 'spots' }> = { type: 'spots', seq: ++seq.current, regionKey, geometry, sigma, k };
    if (spotsBusy.current) spotsWaiting.current = msg;
    else {
      spotsBusy.current = true;
      w.postMessage(msg);
    }
  };

  return { ready, view, live, error, request, spots, spotsError, requestSpots, progress, composites, compositeErrors, requestComposite, composite: composites.panel ?? null, compositeError: compositeErrors.panel ?? null };
}
