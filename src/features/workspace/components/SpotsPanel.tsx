/**
 * The Spots panel of the field workspace: which spots the image shows (per channel, and pairs within d), the
 * live detection sliders (σ, k; detection runs in the scatter's Web Worker with the engine's own detector),
 * and for the selected cell its object measures from the latest run and the histogram of channel-1 →
 * channel-2 nearest distances with the chance expectation (lib/spotView.ts).
 */
import { OBJECT_KEYS, byKey, formatCoefficient } from '@shared/coefficients';
import type { GridRow } from '@shared/schemas/cell-table';
import type { AppliedObjectSettings } from '@shared/schemas/runs';
import { formatFixed } from '@shared/format/number';
import { plural } from '@shared/format/plural';
import { nearestHistogram, pairsWithin, type Xy } from '../lib/spotView';
import { SPOT_COLORS } from './SpotLayer';

export interface SpotToggles {
  ch1: boolean;
  ch2: boolean;
  pairs: boolean;
}

export interface LiveSpotSettings {
  on: boolean;
  sigma: number;
  k: number;
}

export const LIVE_SPOT_RANGES = { sigma: { min: 0.5, max: 5, step: 0.1 }, k: { min: 1, max: 20, step: 0.5 } } as const;

interface Props {
  names: [string, string];
  toggles: SpotToggles;
  onToggles: (t: SpotToggles) => void;
  live: LiveSpotSettings;
  onLive: (l: LiveSpotSettings) => void;
  /** what the live detection found (null until it answers), with its time in the worker */
  preview: { count1: number; count2: number; paired1: number; ms: number; regionName: string } | null;
  previewError: string | null;
  /** the latest run's settings for this field: null = its recipe had spots off; undefined = no run or not loaded */
  stored: AppliedObjectSettings | null | undefined;
  runId: number | null;
  /** the selected cell: its row of the latest run and its spots (live ones while live detection is on) */
  cell: { name: string; row: GridRow | undefined; spots1: Xy[]; spots2: Xy[]; areaPx: number } | null;
  /** pair distance in pixels for the lines and the histogram */
  pairDistancePx: number;
  /** the field's pixel size (µm), when known: distances are also given in µm */
  pixelSizeUm?: number | null;
}

export function SpotsPanel({ names, toggles, onToggles, live, onLive, preview, previewError, stored, runId, cell, pairDistancePx, pixelSizeUm = null }: Props) {
  const source = live.on
    ? 'live detection (preview)'
    : stored
      ? `run #${runId}: σ ${formatFixed(stored.sigmaPx, 2)} px, k ${stored.k}, d ${formatFixed(stored.pairDistancePx, 2)} px`
      : stored === null
        ? `run #${runId} did not look for spots (its recipe has Spots off)`
        : 'no run with spots yet';
  return (
    <section aria-label="Spots" data-testid="spots-panel" className="space-y-3">
      <div className="flex items-baseline justify-between gap-2">
        <h2 className="text-base font-semibold">Spots</h2>
        <span className="text-xs text-ink-soft">{source}</span>
      </div>
      <fieldset className="flex flex-wrap gap-x-4 gap-y-1 text-sm">
        <legend className="sr-only">Show on the image</legend>
        <label className="flex items-center gap-1.5">
          <input type="checkbox" checked={toggles.ch1} onChange={(e) => onToggles({ ...toggles, ch1: e.target.checked })} />
          <svg width="12" height="12" aria-hidden="true">
            <circle cx="6" cy="6" r="4.5" fill="none" stroke={SPOT_COLORS.ch1} strokeWidth="2" />
          </svg>
          {names[0]} spots
        </label>
        <label className="flex items-center gap-1.5">
          <input type="checkbox" checked={toggles.ch2} onChange={(e) => onToggles({ ...toggles, ch2: e.target.checked })} />
          <svg width="12" height="12" aria-hidden="true">
            <path d="M6 1L11 6L6 11L1 6Z" fill="none" stroke={SPOT_COLORS.ch2} strokeWidth="2" />
          </svg>
          {names[1]} spots
        </label>
        <label className="flex items-center gap-1.5">
          <input type="checkbox" checked={toggles.pairs} onChange={(e) => onToggles({ ...toggles, pairs: e.target.checked })} />
          <svg width="12" height="12" aria-hidden="true">
            <line x1="1" y1="11" x2="11" y2="1" stroke={SPOT_COLORS.pair} strokeWidth="2" />
          </svg>
          Pairs within d
        </label>
      </fieldset>

      <div className="rounded border border-ink/10 p-2">
        <label className="flex items-center gap-2 text-sm">
          <input type="checkbox" checked={live.on} onChange={(e) => onLive({ ...live, on: e.target.checked })} />
          Live detection while the sliders move
        </label>
        {live.on && (
          <div className="mt-2 space-y-1.5 text-sm">
            <Slider label="σ (px)" value={live.sigma} {...LIVE_SPOT_RANGES.sigma} onChange={(sigma) => onLive({ ...live, sigma })} />
            <Slider label="k" value={live.k} {...LIVE_SPOT_RANGES.k} onChange={(k) => onLive({ ...live, k })} />
            <p className="text-xs text-ink-soft" role="status">
              {previewError
                ? `Detection failed: ${previewError}`
                : preview
                  ? `${plural(preview.count1, 'spot')} in ${names[0]}, ${plural(preview.count2, 'spot')} in ${names[1]} in ${preview.regionName}, ${preview.paired1} of the ${names[0]} spots paired within d = ${formatFixed(pairDistancePx, 2)} px · raw pixels of the shown slice · ${preview.ms.toFixed(0)} ms in the browser`
                  : 'Detecting…'}
            </p>
            <p className="text-xs text-ink-faint">The recipe decides the numbers of a run; this shows what a σ and k would find.</p>
          </div>
        )}
      </div>

      {cell ? <CellSpots cell={cell} pairDistancePx={pairDistancePx} runId={runId} live={live.on} pixelSizeUm={pixelSizeUm} /> : <p className="text-sm text-ink-soft">Select a cell to see its spot measures and distances.</p>}
    </section>
  );
}

function Slider({ label, value, min, max, step, onChange }: { label: string; value: number; min: number; max: number; step: number; onChange: (v: number) => void }) {
  return (
    <label className="flex items-center gap-2">
      <span className="w-14 shrink-0 text-ink-soft">{label}</span>
      <input type="range" aria-label={label} min={min} max={max} step={step} value={value} onChange={(e) => onChange(Number(e.target.value))} className="w-full accent-[#0f766e]" />
      <span className="w-10 text-right font-mono">{value}</span>
    </label>
  );
}

/** measures that are distances in pixel widths (in 3D with z scaled by the z step, so µm = value × pixel size) */
const DISTANCE_KEYS = new Set<string>(['spotMedianNearest1', 'spotMedianNearest2']);

const HIST_W = 300;
const HIST_H = 110;

function CellSpots({ cell, pairDistancePx, runId, live, pixelSizeUm }: { cell: NonNullable<Props['cell']>; pairDistancePx: number; runId: number | null; live: boolean; pixelSizeUm: number | null }) {
  const d = pairDistancePx;
  const { nearest } = pairsWithin(cell.spots1, cell.spots2, d);
  // up to the longest distance (at least 4d, at most 64 px; longer ones go into the last bar)
  let longest = 0;
  for (const v of nearest) if (v > longest) longest = v;
  const maxPx = Math.min(64, Math.max(4 * d, 8, Math.ceil(longest * 1.05)));
  const bin = maxPx / 16;
  const h = nearest.length ? nearestHistogram(nearest, cell.spots2.length, cell.areaPx, bin, maxPx) : null;
  const top = h ? Math.max(1, ...h.counts, ...h.chance) : 1;
  const bx = (px: number) => (px / maxPx) * HIST_W;
  const by = (v: number) => HIST_H - (v / top) * (HIST_H - 8);
  return (
    <div className="space-y-2" data-testid="cell-spots">
      <h3 className="text-sm font-semibold">Spots of {cell.name}</h3>
      {cell.row && cell.row.measurementId !== null ? (
        <table className="w-full text-sm">
          <caption className="text-left text-xs text-ink-soft">Measured by run #{cell.row.runId ?? runId}</caption>
          <tbody>
            {OBJECT_KEYS.map((k) => (
              <tr key={k} className="border-b border-ink/5 last:border-0">
                <th scope="row" className="py-0.5 text-left font-normal text-ink-soft" title={byKey(k).description}>
                  {byKey(k).label}
                </th>
                <td className="py-0.5 text-right font-mono" data-measure={k}>
                  {formatCoefficient(k, cell.row![k] as number | null)}
                  {pixelSizeUm !== null && DISTANCE_KEYS.has(k) && typeof cell.row![k] === 'number' ? ` (${formatFixed((cell.row![k] as number) * pixelSizeUm, 3)} µm)` : ''}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p className="text-sm text-ink-soft">No run has measured this cell yet.</p>
      )}
      <figure aria-label={`Nearest distances from ${cell.name}'s channel-1 spots to channel-2 spots`}>
        {h ? (
          <svg viewBox={`0 0 ${HIST_W} ${HIST_H + 16}`} className="w-full" role="img" data-testid="nearest-histogram">
            <title>Nearest-neighbour distances (bars) and the expectation for randomly placed channel-2 spots (line)</title>
            {h.counts.map((c, i) => (
              <rect key={i} x={bx(h.edges[i]) + 0.5} width={Math.max(0, bx(bin) - 1)} y={by(c)} height={HIST_H - by(c)} fill="#0f766e" opacity={0.7} />
            ))}
            <polyline fill="none" stroke="#b45309" strokeWidth={1.5} points={h.chance.map((c, i) => `${bx(h.edges[i] + bin / 2)},${by(c)}`).join(' ')} />
            <line x1={bx(d)} x2={bx(d)} y1={0} y2={HIST_H} stroke={SPOT_COLORS.pair} strokeWidth={1.5} strokeDasharray="3 2" />
            <line x1={0} x2={HIST_W} y1={HIST_H} y2={HIST_H} stroke="#57534e" strokeWidth={0.75} />
            {[0, maxPx / 2, maxPx].map((t) => (
              <text key={t} x={Math.min(HIST_W - 30, bx(t))} y={HIST_H + 12} fontSize="10" fill="#57534e">
                {formatFixed(t, 1)}
                {t === maxPx ? ' px' : ''}
              </text>
            ))}
          </svg>
        ) : (
          <p className="text-sm text-ink-soft">{cell.spots1.length === 0 ? 'No channel-1 spots in this cell.' : 'No channel-2 spots in this cell, so no distances.'}</p>
        )}
        <figcaption className="text-xs text-ink-soft">
          Bars: distance (px) from each channel-1 spot to its nearest channel-2 spot ({plural(cell.spots1.length, 'spot')}, {live ? 'live detection' : 'as the run found them'}). Line: what randomly placed channel-2 spots would give, ignoring the cell's edge. Dashed: d = {formatFixed(d, 2)} px.
        </figcaption>
      </figure>
    </div>
  );
}
