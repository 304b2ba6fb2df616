/**
 * Pixel scatter: the 2-D joint histogram of channel 1 (across) and channel 2 (up) over the selected cell or
 * the whole field, log-scaled counts, threshold lines T1 / T2 that can be dragged (or typed), and the share
 * of pixels in each quadrant. Computed in a Web Worker (useScatter); the numbers are exact ("above" means
 * strictly greater than the threshold). Default thresholds describe the cells (scatterBasis.ts: over the
 * outlined cells, saturated pixels left out; the sentence under the plot says which), and the bins holding
 * saturated pixels are drawn in their own colour, on the edge when they lie beyond the axes.
 */
import { useEffect, useRef, useState } from 'react';
import type { ScatterView } from '../lib/useScatter';
import { NumberText, readNumberText } from '@shared/schemas/common';
import { plural } from '@shared/format/plural';
import { describeBasis } from '../lib/scatterBasis';

const SIZE = 264;
const STOPS: [number, number, number][] = [
  [247, 245, 240], // paper
  [94, 184, 170], // light teal
  [15, 118, 110], // accent
  [31, 42, 51], // ink
];
/** bins holding saturated pixels (a warm red, apart from the teal-to-ink count scale) */
const SATURATED: [number, number, number] = [190, 18, 60];
/** beyond this many marked bins the colour of the bins alone shows them */
const MAX_SATURATED_RINGS = 200;

function colour(t: number): [number, number, number] {
  const x = Math.max(0, Math.min(1, t)) * (STOPS.length - 1);
  const i = Math.min(STOPS.length - 2, Math.floor(x));
  const f = x - i;
  const a = STOPS[i], b = STOPS[i + 1];
  return [a[0] + (b[0] - a[0]) * f, a[1] + (b[1] - a[1]) * f, a[2] + (b[2] - a[2]) * f];
}

const fmtPct = (k: number, n: number) => (n ? `${((100 * k) / n).toFixed(1)}%` : '—');
const fmtV = (v: number) => (Math.abs(v) >= 100 || Number.isInteger(v) ? String(Math.round(v)) : v.toPrecision(3));

export function PixelScatter({
  data,
  names,
  regionName,
  onThresholds,
  onThresholdsDone,
  onReset,
  manual,
  unit = 'pixel',
}: {
  data: ScatterView | null;
  names: [string, string];
  regionName: string;
  /** while dragging (fast path: quadrants only) */
  onThresholds: (t1: number, t2: number) => void;
  /** drag ended / typed: recompute the live coefficients too */
  onThresholdsDone: (t1: number, t2: number) => void;
  onReset: () => void;
  manual: boolean;
  /** what the scatter counts: pixels of one slice, or voxels of a whole volume */
  unit?: 'pixel' | 'voxel';
}) {
  const canvas = useRef<HTMLCanvasElement>(null);
  const [drag, setDrag] = useState<null | 'x' | 'y' | 'xy'>(null);

  useEffect(() => {
    const c = canvas.current;
    if (!c || !data) return;
    const bins = data.bins;
    c.width = bins;
    c.height = bins;
    const ctx = c.getContext('2d');
    if (!ctx) return;
    const im = ctx.createImageData(bins, bins);
    const lm = Math.log1p(data.max || 1);
    for (let by = 0; by < bins; by++)
      for (let bx = 0; bx < bins; bx++) {
        const cnt = data.counts[by * bins + bx];
        const o = ((bins - 1 - by) * bins + bx) * 4;
        const [r, g, b] = data.saturatedMarks.marks[by * bins + bx] ? SATURATED : cnt ? colour(0.12 + (0.88 * Math.log1p(cnt)) / lm) : STOPS[0];
        im.data[o] = r;
        im.data[o + 1] = g;
        im.data[o + 2] = b;
        im.data[o + 3] = 255;
      }
    ctx.putImageData(im, 0, 0);
  }, [data]);

  if (!data) return <div className="grid h-[264px] place-items-center text-sm text-ink-faint">Preparing the scatter…</div>;
  const [x0, x1] = data.rangeX, [y0, y1] = data.rangeY;
  const px = (t: number) => ((t - x0) / (x1 - x0)) * SIZE;
  const py = (t: number) => SIZE - ((t - y0) / (y1 - y0)) * SIZE;
  const fromEvent = (e: React.PointerEvent) => {
    const r = (e.currentTarget as HTMLElement).getBoundingClientRect();
    const fx = Math.max(0, Math.min(1, (e.clientX - r.left) / r.width));
    const fy = Math.max(0, Math.min(1, 1 - (e.clientY - r.top) / r.height));
    return { t1: x0 + fx * (x1 - x0), t2: y0 + fy * (y1 - y0), sx: e.clientX - r.left, sy: e.clientY - r.top, w: r.width, h: r.height };
  };
  const snap = (v: number) => (Number.isInteger(data.t1) && x1 - x0 > 50 ? Math.round(v) : v);
  const q = data.quadrants;
  const sat = data.saturatedMarks;
  const satTotal = sat.only1 + sat.only2 + sat.both;
  // a bin is about one screen pixel: the marked bins also get a ring, so a few saturated pixels stay visible
  const satRings: [number, number][] = [];
  for (let i = 0; i < sat.marks.length && satRings.length <= MAX_SATURATED_RINGS; i++) if (sat.marks[i]) satRings.push([i % data.bins, Math.floor(i / data.bins)]);

  return (
    <div>
      <div className="flex items-baseline justify-between text-xs text-ink-soft">
        <span>
          {regionName} · {plural(data.n, unit)}
        </span>
        <span title="time for the last update in the worker">{data.ms.toFixed(0)} ms</span>
      </div>
      <div className="mt-1 flex gap-2">
        <div className="flex w-4 items-center justify-center">
          <span className="-rotate-90 whitespace-nowrap text-xs font-medium text-ch2-ink">{names[1]} →</span>
        </div>
        <div>
          <div
            className="relative touch-none"
            style={{ width: SIZE, height: SIZE, cursor: drag ? 'grabbing' : 'crosshair' }}
            data-testid="pixel-scatter"
            onPointerDown={(e) => {
              const p = fromEvent(e);
              const nearX = Math.abs(p.sx - (px(data.t1) / SIZE) * p.w) < 8;
              const nearY = Math.abs(p.sy - (py(data.t2) / SIZE) * p.h) < 8;
              const mode = nearX && nearY ? 'xy' : nearX ? 'x' : nearY ? 'y' : 'xy';
              setDrag(mode);
              (e.currentTarget as HTMLElement).setPointerCapture(e.pointerId);
              const t1 = mode === 'y' ? data.t1 : snap(p.t1), t2 = mode === 'x' ? data.t2 : snap(p.t2);
              onThresholds(t1, t2);
            }}
            onPointerMove={(e) => {
              if (!drag) return;
              const p = fromEvent(e);
              onThresholds(drag === 'y' ? data.t1 : snap(p.t1), drag === 'x' ? data.t2 : snap(p.t2));
            }}
            onPointerUp={() => {
              if (drag) onThresholdsDone(data.t1, data.t2);
              setDrag(null);
            }}
          >
            <canvas ref={canvas} className="absolute inset-0 h-full w-full rounded-sm border border-ink/15" style={{ imageRendering: 'pixelated' }} aria-label={`Pixel scatter of ${regionName}: joint histogram with log-scaled counts`} role="img" />
            <svg className="pointer-events-none absolute inset-0" width={SIZE} height={SIZE}>
              <line x1={px(data.t1)} x2={px(data.t1)} y1={0} y2={SIZE} stroke="#b45309" strokeWidth={1.5} />
              <line y1={py(data.t2)} y2={py(data.t2)} x1={0} x2={SIZE} stroke="#b45309" strokeWidth={1.5} />
              {satRings.length <= MAX_SATURATED_RINGS &&
                satRings.map(([bx, by]) => (
                  <circle key={`${bx}-${by}`} cx={((bx + 0.5) / data.bins) * SIZE} cy={SIZE - ((by + 0.5) / data.bins) * SIZE} r={4} fill="none" stroke={`rgb(${SATURATED.join(',')})`} strokeWidth={1.5} data-saturated-ring="" />
                ))}
            </svg>
            <span className="absolute right-1 top-1 rounded bg-white/80 px-1 text-[11px] font-mono" title="both above threshold">{fmtPct(q.both, data.n)}</span>
            <span className="absolute left-1 top-1 rounded bg-white/80 px-1 text-[11px] font-mono" title={`only ${names[1]} above`}>{fmtPct(q.only2, data.n)}</span>
            <span className="absolute right-1 bottom-1 rounded bg-white/80 px-1 text-[11px] font-mono" title={`only ${names[0]} above`}>{fmtPct(q.only1, data.n)}</span>
            <span className="absolute left-1 bottom-1 rounded bg-white/80 px-1 text-[11px] font-mono" title="neither above">{fmtPct(q.neither, data.n)}</span>
          </div>
          <div className="mt-0.5 flex justify-between font-mono text-[11px] text-ink-faint" style={{ width: SIZE }}>
            <span>{fmtV(x0)}</span>
            <span className="font-sans font-medium text-ch1-ink">{names[0]} →</span>
            <span>{fmtV(x1)}</span>
          </div>
        </div>
      </div>
      {data.outside > 0 && (
        <p className="mt-0.5 text-[11px] text-ink-faint">
          {data.outside.toLocaleString()} brightest pixels lie beyond the axes (up to {fmtV(data.dataMax[0])} / {fmtV(data.dataMax[1])}); the quadrant shares count them.
        </p>
      )}
      {satTotal > 0 && (
        <p className="mt-0.5 flex items-baseline gap-1 text-[11px] text-ink-soft" data-testid="scatter-saturated">
          <span aria-hidden="true" className="inline-block h-2 w-2 shrink-0" style={{ background: `rgb(${SATURATED.join(',')})` }} />
          <span>
            {plural(satTotal, 'saturated pixel')} (only {names[0]} {sat.only1.toLocaleString('en-US')}, only {names[1]} {sat.only2.toLocaleString('en-US')}, both {sat.both.toLocaleString('en-US')}) drawn in red (ringed)
            {sat.beyondAxes > 0 ? `; ${sat.beyondAxes.toLocaleString('en-US')} beyond the axes are drawn on the edge` : ''}.
          </span>
        </p>
      )}
      <ThresholdInputs t1={data.t1} t2={data.t2} range1={[data.rangeX[0], data.dataMax[0]]} range2={[data.rangeY[0], data.dataMax[1]]} onChange={onThresholdsDone} />
      <div className="mt-1 flex items-start justify-between gap-2 text-xs text-ink-soft">
        <span>
          <span data-testid="threshold-basis">{manual ? 'Thresholds set by hand.' : describeBasis(data.basis)}</span> Above = strictly greater.
        </span>
        {manual && (
          <button type="button" className="shrink-0 text-accent underline-offset-2 hover:underline" onClick={onReset}>
            Back to Otsu
          </button>
        )}
      </div>
      <dl className="mt-2 grid grid-cols-2 gap-x-3 text-xs">
        <dt className="text-ink-soft">Both above</dt>
        <dd className="text-right font-mono">{q.both.toLocaleString()} ({fmtPct(q.both, data.n)})</dd>
        <dt className="text-ink-soft">Only {names[0]}</dt>
        <dd className="text-right font-mono">{q.only1.toLocaleString()} ({fmtPct(q.only1, data.n)})</dd>
        <dt className="text-ink-soft">Only {names[1]}</dt>
        <dd className="text-right font-mono">{q.only2.toLocaleString()} ({fmtPct(q.only2, data.n)})</dd>
        <dt className="text-ink-soft">Neither</dt>
        <dd className="text-right font-mono">{q.neither.toLocaleString()} ({fmtPct(q.neither, data.n)})</dd>
      </dl>
    </div>
  );
}

/** Typed thresholds: a number within the region's data range on each axis, else a message and no change. */
export function ThresholdInputs({ t1, t2, range1, range2, onChange }: { t1: number; t2: number; range1: [number, number]; range2: [number, number]; onChange: (t1: number, t2: number) => void }) {
  const [a, setA] = useState(fmtV(t1));
  const [b, setB] = useState(fmtV(t2));
  const [error, setError] = useState<string | null>(null);
  useEffect(() => setA(fmtV(t1)), [t1]);
  useEffect(() => setB(fmtV(t2)), [t2]);
  const commit = () => {
    if (a === fmtV(t1) && b === fmtV(t2)) return setError(null); // nothing typed: keep the exact values
    const x = readNumberText(NumberText('T1', { min: range1[0], max: range1[1] }), a);
    const y = readNumberText(NumberText('T2', { min: range2[0], max: range2[1] }), b);
    setError(x.error ?? y.error);
    if (x.value !== null && y.value !== null) onChange(x.value, y.value);
  };
  const cls = 'w-20 rounded border border-ink/20 bg-white px-1.5 py-0.5 font-mono text-xs aria-[invalid=true]:border-danger';
  return (
    <form
      className="mt-2 flex items-center gap-2 text-xs"
      onSubmit={(e) => {
        e.preventDefault();
        commit();
      }}
    >
      <label className="flex items-center gap-1">
        T1 <input aria-label="Threshold T1 (channel 1)" aria-invalid={!!error && error.startsWith('T1')} aria-describedby={error ? 'threshold-error' : undefined} className={cls} value={a} onChange={(e) => setA(e.target.value)} onBlur={commit} inputMode="decimal" />
      </label>
      <label className="flex items-center gap-1">
        T2 <input aria-label="Threshold T2 (channel 2)" aria-invalid={!!error && error.startsWith('T2')} aria-describedby={error ? 'threshold-error' : undefined} className={cls} value={b} onChange={(e) => setB(e.target.value)} onBlur={commit} inputMode="decimal" />
      </label>
      {error && (
        <span id="threshold-error" role="alert" className="text-danger">
          {error}
        </span>
      )}
    </form>
  );
}
