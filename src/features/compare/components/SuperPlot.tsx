/**
 * The replicate-aware plot of a comparison (the "SuperPlot" design of Lord et al. 2020, J. Cell Biol.
 * 219:e202001064, doi:10.1083/jcb.202001064): every cell a small point coloured by its coverslip, each
 * coverslip's mean a large marker of the same colour and shape, and per condition the mean of coverslip
 * means with its hierarchical bootstrap interval. Pure SVG (d3 scales and symbols) so it exports as SVG and PNG
 * and works inside report pages.
 */
import { forwardRef, useMemo } from 'react';
import { byKey } from '@shared/coefficients';
import { plotDomain } from '../lib/plotDomain';
import { scaleBand, scaleLinear, symbol, symbolCircle, symbolCross, symbolDiamond, symbolSquare, symbolStar, symbolTriangle, symbolWye, type SymbolType } from 'd3';
import { COMPARE_POINTS_MAX, type Comparison } from '@shared/schemas/compare';
import { coverslipColor, coverslipMarker, type Marker } from '../lib/palette';
import { plural } from '@shared/format/plural';
import { formatMagnitude, formatTick } from '@shared/format/number';

const SYMBOLS: Record<Marker, SymbolType> = {
  circle: symbolCircle,
  square: symbolSquare,
  triangle: symbolTriangle,
  diamond: symbolDiamond,
  triangleDown: symbolTriangle,
  cross: symbolCross,
  star: symbolStar,
  wye: symbolWye,
};

/** Most points drawn; beyond this an even subsample is drawn (statistics use all cells). The Compare answer
 * itself lists at most as many (COMPARE_POINTS_MAX, a sample stratified by coverslip); report snapshots list
 * every cell. */
export const MAX_DRAWN_POINTS = COMPARE_POINTS_MAX;

/** Deterministic jitter in [−1, 1] from an id (integer hash; common practice). */
function jitter(id: number) {
  let h = Math.imul(id ^ 0x9e3779b9, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return ((h >>> 0) / 4294967295) * 2 - 1;
}


export type SuperPlotProps = { data: Comparison; width?: number; height?: number; title?: string };

export const SuperPlot = forwardRef<SVGSVGElement, SuperPlotProps>(function SuperPlot({ data, width = 720, height = 420, title }, ref) {
  const m = { top: 34, right: 16, bottom: 56, left: 64 };
  const iw = width - m.left - m.right;
  const ih = height - m.top - m.bottom;

  const { x, y, drawn, ticks } = useMemo(() => {
    const x = scaleBand<number>()
      .domain(data.conditions.map((c) => c.id))
      .range([0, iw])
      .paddingInner(0.25)
      .paddingOuter(0.15);
    const values: (number | null)[] = data.points.map((p) => p.value);
    for (const c of data.conditions) values.push(c.ci.lower, c.ci.upper, c.mean);
    const y = scaleLinear()
      .domain(plotDomain(values, byKey(data.coefficient).axis))
      .range([ih, 0]);
    let drawn = data.points;
    if (drawn.length > MAX_DRAWN_POINTS) {
      const step = drawn.length / MAX_DRAWN_POINTS;
      drawn = Array.from({ length: MAX_DRAWN_POINTS }, (_, i) => data.points[Math.floor(i * step)]);
    }
    return { x, y, drawn, ticks: y.ticks(6) };
  }, [data, iw, ih]);

  /** every included cell (the answer may list a sample of them) */
  const total = data.pointsTotal ?? data.points.length;
  const slip = new Map(data.coverslips.map((s) => [s.id, s]));
  const slipsOf = (condId: number) => data.coverslips.filter((s) => s.conditionId === condId);
  const bw = x.bandwidth();
  const slipX = (condId: number, slipId: number) => {
    const list = slipsOf(condId);
    const i = list.findIndex((s) => s.id === slipId);
    const n = Math.max(1, list.length);
    return (x(condId) ?? 0) + bw * (0.2 + (0.6 * (i + 0.5)) / n);
  };
  const heading = title ?? `${data.label} by condition: cells, coverslip means, and mean of coverslip means with ${Math.round(data.bootstrap.confidence * 100)}% interval`;

  return (
    <svg
      ref={ref}
      viewBox={`0 0 ${width} ${height}`}
      width="100%"
      role="img"
      aria-labelledby="superplot-title superplot-desc"
      style={{ maxWidth: width, fontFamily: 'IBM Plex Sans, system-ui, sans-serif', background: '#ffffff' }}
      data-testid="superplot"
    >
      <title id="superplot-title">{heading}</title>
      <desc id="superplot-desc">{data.summary}</desc>
      <text x={m.left} y={18} fontSize={13} fontWeight={600} fill="#1f2a33">
        {data.label}
        {data.averaging === 'fisher_z' ? ' (means through Fisher’s z)' : ''}
      </text>
      <g transform={`translate(${m.left},${m.top})`}>
        {ticks.map((t) => (
          <g key={t} transform={`translate(0,${y(t)})`}>
            <line x1={0} x2={iw} stroke="#1f2a33" strokeOpacity={0.08} />
            <text x={-8} dy="0.32em" textAnchor="end" fontSize={11} fill="#4a5863">
              {formatTick(t)}
            </text>
          </g>
        ))}
        <line x1={0} x2={0} y1={0} y2={ih} stroke="#4a5863" />
        <text transform={`translate(${-48},${ih / 2}) rotate(-90)`} textAnchor="middle" fontSize={12} fill="#1f2a33">
          {data.label}
        </text>
        {/* cells */}
        <g data-layer="cells">
          {drawn.map((p) => {
            const s = slip.get(p.coverslipId);
            const cx = slipX(p.conditionId, p.coverslipId) + jitter(p.cellId) * (bw * 0.3) / Math.max(1, slipsOf(p.conditionId).length);
            return <circle key={p.cellId} cx={cx} cy={y(p.value)} r={2.2} fill={coverslipColor(s?.colorIndex ?? 0)} fillOpacity={0.45} />;
          })}
        </g>
        {/* condition mean of coverslip means with its interval */}
        {data.conditions.map((c) => {
          const x0 = x(c.id) ?? 0;
          if (c.mean === null) return null;
          return (
            <g key={c.id} data-condition={c.name} data-mean={c.mean}>
              {c.ci.lower !== null && c.ci.upper !== null && (
                <>
                  <line x1={x0 + bw / 2} x2={x0 + bw / 2} y1={y(c.ci.lower)} y2={y(c.ci.upper)} stroke="#1f2a33" strokeWidth={2} />
                  <line x1={x0 + bw / 2 - 8} x2={x0 + bw / 2 + 8} y1={y(c.ci.lower)} y2={y(c.ci.lower)} stroke="#1f2a33" strokeWidth={2} />
                  <line x1={x0 + bw / 2 - 8} x2={x0 + bw / 2 + 8} y1={y(c.ci.upper)} y2={y(c.ci.upper)} stroke="#1f2a33" strokeWidth={2} />
                </>
              )}
              <line x1={x0 + bw * 0.12} x2={x0 + bw * 0.88} y1={y(c.mean)} y2={y(c.mean)} stroke="#1f2a33" strokeWidth={3} />
            </g>
          );
        })}
        {/* coverslip means */}
        <g data-layer="coverslip-means">
          {data.coverslips.map((s) =>
            s.mean === null ? null : (
              <path
                key={s.id}
                d={symbol(SYMBOLS[coverslipMarker(s.colorIndex)], 150)() ?? ''}
                transform={`translate(${slipX(s.conditionId, s.id)},${y(s.mean)})${coverslipMarker(s.colorIndex) === 'triangleDown' ? ' rotate(180)' : ''}`}
                fill={coverslipColor(s.colorIndex)}
                stroke="#ffffff"
                strokeWidth={1.5}
              >
                <title>{`${s.name}: mean ${formatMagnitude(s.mean)}, ${plural(s.nCells, 'cell')}`}</title>
              </path>
            ),
          )}
        </g>
        {/* x axis */}
        <line x1={0} x2={iw} y1={ih} y2={ih} stroke="#4a5863" />
        {data.conditions.map((c) => (
          <g key={c.id} transform={`translate(${(x(c.id) ?? 0) + bw / 2},${ih})`}>
            <text y={18} textAnchor="middle" fontSize={12} fontWeight={600} fill="#1f2a33">
              {c.name}
            </text>
            <text y={34} textAnchor="middle" fontSize={11} fill="#4a5863">
              {`${plural(c.nCoverslips, 'coverslip')} · ${plural(c.nCells, 'cell')} · mean ${formatMagnitude(c.mean)}`}
            </text>
          </g>
        ))}
      </g>
      {drawn.length < total && (
        <text x={width - m.right} y={height - 6} textAnchor="end" fontSize={10} fill="#5f6b74">
          {`drawing ${drawn.length.toLocaleString('en')} of ${plural(total, 'cell')}${data.pointsSample ? ' (in each coverslip its share: lowest, highest and evenly spaced cells)' : ''}; statistics use all`}
        </text>
      )}
    </svg>
  );
});

/** The key to coverslip colours and shapes. */
export function SuperPlotLegend({ data }: { data: Comparison }) {
  return (
    <ul className="mt-2 flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-soft" aria-label="Coverslips">
      {data.coverslips.map((s) => (
        <li key={s.id} className="flex items-center gap-1.5">
          <svg width={12} height={12} viewBox="-6 -6 12 12" aria-hidden="true">
            <path d={symbol(SYMBOLS[coverslipMarker(s.colorIndex)], 50)() ?? ''} fill={coverslipColor(s.colorIndex)} transform={coverslipMarker(s.colorIndex) === 'triangleDown' ? 'rotate(180)' : undefined} />
          </svg>
          {data.conditions.find((c) => c.id === s.conditionId)?.name} · {s.name} ({s.nCells})
        </li>
      ))}
    </ul>
  );
}

export default SuperPlot;
