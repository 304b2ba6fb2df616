/** Pixel scatter of one cell: a 2-D histogram of (channel 1, channel 2) with the cell's thresholds as lines. */
import type { CellScatter } from '@shared/schemas/reports';
import { fmtNum } from '../lib/palette';

export function ScatterFigure({ scatter }: { scatter: CellScatter }) {
  const S = 256;
  const { bins, counts, max1, max2 } = scatter;
  const cell = S / bins;
  const peak = Math.max(1, ...counts);
  const shade = (n: number) => (n === 0 ? null : 0.15 + 0.85 * (Math.log1p(n) / Math.log1p(peak)));
  const tx = scatter.threshold1 !== null && max1 > 0 ? (scatter.threshold1 / max1) * S : null;
  const ty = scatter.threshold2 !== null && max2 > 0 ? S - (scatter.threshold2 / max2) * S : null;
  return (
    <figure className="report-figure">
      <svg viewBox={`-40 -6 ${S + 50} ${S + 40}`} className="w-full max-w-xs" role="img" aria-label={`Pixel scatter of ${scatter.cellName}`}>
        <rect x={0} y={0} width={S} height={S} fill="#ffffff" stroke="#8a96a0" />
        {counts.map((n, i) => {
          const a = shade(n);
          if (a === null) return null;
          const col = i % bins;
          const row = Math.floor(i / bins);
          return <rect key={i} x={col * cell} y={S - (row + 1) * cell} width={cell} height={cell} fill="#0b524c" fillOpacity={a} />;
        })}
        {tx !== null && <line x1={tx} x2={tx} y1={0} y2={S} stroke="#b45309" strokeDasharray="4 3" />}
        {ty !== null && <line x1={0} x2={S} y1={ty} y2={ty} stroke="#b45309" strokeDasharray="4 3" />}
        <text x={S / 2} y={S + 16} fontSize={11} textAnchor="middle" fill="#1f2a33">channel 1 (0–{fmtNum(max1, 0)})</text>
        <text x={-10} y={S / 2} fontSize={11} textAnchor="middle" fill="#1f2a33" transform={`rotate(-90 -10 ${S / 2})`}>channel 2 (0–{fmtNum(max2, 0)})</text>
      </svg>
      <figcaption className="mt-1 text-xs text-ink-soft">
        {scatter.cellName} in {scatter.fieldName}: {scatter.pixels} pixels, raw intensities, shade on a log scale. Dashed lines: thresholds T1 = {fmtNum(scatter.threshold1, 1)}, T2 = {fmtNum(scatter.threshold2, 1)}.
      </figcaption>
    </figure>
  );
}
