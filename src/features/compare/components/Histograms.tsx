/** Per-condition histograms (proportion of cells per bin) overlaid as step lines, with the distances between conditions. */
import { forwardRef } from 'react';
import { scaleLinear } from 'd3';
import type { Comparison, HistogramSet } from '@shared/schemas/compare';
import { conditionStyle } from '../lib/palette';
import { formatFixed, formatTick } from '@shared/format/number';


export const HistogramChart = forwardRef<SVGSVGElement, { set: HistogramSet; conditions: Comparison['conditions']; width?: number; height?: number }>(function HistogramChart(
  { set, conditions, width = 360, height = 220 },
  ref,
) {
  const m = { top: 26, right: 10, bottom: 36, left: 46 };
  const iw = width - m.left - m.right;
  const ih = height - m.top - m.bottom;
  const lo = set.edges[0];
  const hi = set.edges[set.edges.length - 1];
  const props = set.byCondition.map((b) => {
    const tot = b.counts.reduce((a, c) => a + c, 0);
    return { ...b, p: b.counts.map((c) => (tot ? c / tot : 0)) };
  });
  const ymax = Math.max(0.01, ...props.flatMap((b) => b.p));
  const x = scaleLinear().domain([lo, hi]).range([0, iw]);
  const y = scaleLinear().domain([0, ymax]).nice().range([ih, 0]);
  const step = (p: number[]) => {
    let d = `M${x(set.edges[0])},${y(0)}`;
    p.forEach((v, i) => (d += `L${x(set.edges[i])},${y(v)}L${x(set.edges[i + 1])},${y(v)}`));
    return d + `L${x(hi)},${y(0)}`;
  };
  return (
    <svg ref={ref} viewBox={`0 0 ${width} ${height}`} width="100%" role="img" aria-label={`Histogram of ${set.label} by condition`} style={{ maxWidth: width, fontFamily: 'IBM Plex Sans, system-ui, sans-serif', background: '#ffffff' }}>
      <text x={m.left} y={16} fontSize={12} fontWeight={600} fill="#1f2a33">
        {set.label}
      </text>
      <g transform={`translate(${m.left},${m.top})`}>
        {y.ticks(4).map((t) => (
          <g key={t} transform={`translate(0,${y(t)})`}>
            <line x1={0} x2={iw} stroke="#1f2a33" strokeOpacity={0.08} />
            <text x={-6} dy="0.32em" textAnchor="end" fontSize={10} fill="#4a5863">
              {formatTick(t)}
            </text>
          </g>
        ))}
        {x.ticks(5).map((t) => (
          <text key={t} x={x(t)} y={ih + 14} textAnchor="middle" fontSize={10} fill="#4a5863">
            {formatTick(t)}
          </text>
        ))}
        <line x1={0} x2={iw} y1={ih} y2={ih} stroke="#4a5863" />
        <text x={iw / 2} y={ih + 30} textAnchor="middle" fontSize={10} fill="#4a5863">
          {set.label} (proportion of cells per bin)
        </text>
        {props.map((b) => {
          const i = conditions.findIndex((c) => c.id === b.conditionId);
          const st = conditionStyle(i);
          return <path key={b.conditionId} d={step(b.p)} fill="none" stroke={st.color} strokeWidth={1.8} strokeDasharray={st.dash || undefined} />;
        })}
      </g>
    </svg>
  );
});

export function Histograms({ data }: { data: Comparison }) {
  const name = (id: number) => data.conditions.find((c) => c.id === id)?.name ?? String(id);
  return (
    <div className="space-y-3">
      <ul className="flex flex-wrap gap-4 text-xs text-ink-soft" aria-label="Conditions">
        {data.conditions.map((c, i) => (
          <li key={c.id} className="flex items-center gap-1.5">
            <svg width={24} height={8} aria-hidden="true">
              <line x1={0} x2={24} y1={4} y2={4} stroke={conditionStyle(i).color} strokeWidth={2} strokeDasharray={conditionStyle(i).dash || undefined} />
            </svg>
            {c.name}
          </li>
        ))}
      </ul>
      <div className="grid gap-4 lg:grid-cols-3">
        {data.histograms.map((h) => (
          <figure key={h.key} className="rounded-md border border-ink/10 bg-white p-2">
            <HistogramChart set={h} conditions={data.conditions} />
            {h.distances.length > 0 && (
              <table className="mt-1 w-full text-xs">
                <caption className="sr-only">Distances between conditions for {h.label}</caption>
                <thead className="text-ink-soft">
                  <tr>
                    <th className="text-left font-medium">conditions</th>
                    <th className="text-right font-medium">χ² distance</th>
                    <th className="text-right font-medium">EMD</th>
                    <th className="text-right font-medium" title="quadratic-chi distance, m = 0.5, neighbouring bins half similar (Pele & Werman 2010)">
                      QC m 0.5
                    </th>
                    <th className="text-right font-medium" title="quadratic-chi distance, m = 0.9, neighbouring bins half similar (Pele & Werman 2010)">
                      QC m 0.9
                    </th>
                  </tr>
                </thead>
                <tbody className="font-mono">
                  {h.distances.map((d) => (
                    <tr key={`${d.a}-${d.b}`}>
                      <td className="font-sans">
                        {name(d.a)} · {name(d.b)}
                      </td>
                      <td className="text-right">{formatFixed(d.chiSquared, 3)}</td>
                      <td className="text-right">{formatFixed(d.emd, 3)}</td>
                      <td className="text-right">{formatFixed(d.quadraticChiS, 3)}</td>
                      <td className="text-right">{formatFixed(d.quadraticChiN, 3)}</td>
                    </tr>
                  ))}
                </tbody>
                <tfoot>
                  <tr>
                    <td colSpan={5} className="pt-1 text-ink-soft">
                      QC: quadratic-chi distance (Pele &amp; Werman 2010), bin similarity max(0, 1 − |i − j| / 2): a neighbouring bin counts half as similar, bins further apart not at all.
                    </td>
                  </tr>
                </tfoot>
              </table>
            )}
          </figure>
        ))}
      </div>
    </div>
  );
}
