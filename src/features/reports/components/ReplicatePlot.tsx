/**
 * The replicate-aware plot of one coefficient (after Lord et al. 2020, J. Cell Biol. 219:e202001064): every
 * included cell as a small dot coloured by its coverslip, each coverslip's mean as a large ringed marker in the
 * same colour, and the condition's mean of coverslip means as a bar. Drawn from the frozen snapshot only.
 */
import type { ReportCoefficient, ReportSnapshot } from '@shared/schemas/reports';
import { COEFFICIENT_LABELS } from '@shared/schemas/reports';
import { coverslipColour, fmtNum } from '../lib/palette';

const W = 560;
const H = 300;
const M = { l: 52, r: 12, t: 14, b: 46 };

/** deterministic jitter in [-1, 1] from an id (so the figure prints the same every time) */
const jitter = (id: number) => {
  let x = (id * 2654435761) >>> 0;
  x ^= x >>> 15;
  x = Math.imul(x, 2246822519) >>> 0;
  return ((x % 1000) / 1000) * 2 - 1;
};

export function ReplicatePlot({ snapshot, coefficient }: { snapshot: ReportSnapshot; coefficient: ReportCoefficient }) {
  const conds = snapshot.conditions;
  const cells = snapshot.cells.filter((c) => !c.excluded && c.values[coefficient] !== null && c.values[coefficient] !== undefined);
  const slipMeans = snapshot.coverslipSummaries.filter((s) => s.coefficient === coefficient && s.mean !== null);
  const condMeans = snapshot.conditionSummaries.filter((s) => s.coefficient === coefficient);
  const vals = [...cells.map((c) => c.values[coefficient] as number), ...slipMeans.map((s) => s.mean as number)];
  if (!vals.length || !conds.length) return <p className="text-sm text-ink-soft">No measured cells for {COEFFICIENT_LABELS[coefficient]}.</p>;
  let lo = Math.min(...vals);
  let hi = Math.max(...vals);
  if (hi - lo < 1e-9) {
    lo -= 0.5;
    hi += 0.5;
  }
  const pad = (hi - lo) * 0.08;
  lo -= pad;
  hi += pad;
  const y = (v: number) => M.t + (H - M.t - M.b) * (1 - (v - lo) / (hi - lo));
  const band = (W - M.l - M.r) / conds.length;
  const cx = (i: number) => M.l + band * (i + 0.5);
  const slipIndex = new Map<number, number>();
  conds.forEach((c) => c.coverslips.forEach((s) => slipIndex.set(s.id, slipIndex.size)));
  const ticks = Array.from({ length: 5 }, (_, i) => lo + ((hi - lo) * i) / 4);
  return (
    <figure className="report-figure">
      <svg viewBox={`0 0 ${W} ${H}`} className="w-full max-w-2xl" role="img" aria-label={`${COEFFICIENT_LABELS[coefficient]} per cell, coloured by coverslip, with coverslip means`}>
        <line x1={M.l} x2={M.l} y1={M.t} y2={H - M.b} stroke="#8a96a0" />
        {ticks.map((t) => (
          <g key={t}>
            <line x1={M.l - 4} x2={W - M.r} y1={y(t)} y2={y(t)} stroke="#1f2a33" strokeOpacity={0.07} />
            <text x={M.l - 6} y={y(t) + 3} fontSize={10} textAnchor="end" fill="#4a5863">
              {fmtNum(t, 2)}
            </text>
          </g>
        ))}
        <text x={14} y={(H - M.b + M.t) / 2} fontSize={11} fill="#1f2a33" transform={`rotate(-90 14 ${(H - M.b + M.t) / 2})`} textAnchor="middle">
          {COEFFICIENT_LABELS[coefficient]}
        </text>
        {conds.map((c, i) => {
          const cm = condMeans.find((m) => m.conditionId === c.id);
          return (
            <g key={c.id}>
              <text x={cx(i)} y={H - M.b + 16} fontSize={11} textAnchor="middle" fill="#1f2a33">
                {c.name}
              </text>
              <text x={cx(i)} y={H - M.b + 30} fontSize={9} textAnchor="middle" fill="#4a5863">
                {c.cellsIncluded} cells · {c.coverslipsUsed} coverslips
              </text>
              {cells
                .filter((x) => x.conditionId === c.id)
                .map((x) => (
                  <circle key={x.cellId} cx={cx(i) + jitter(x.cellId) * band * 0.3} cy={y(x.values[coefficient] as number)} r={2.4} fill={coverslipColour(slipIndex.get(x.coverslipId) ?? 0)} fillOpacity={0.45} />
                ))}
              {cm?.mean !== null && cm?.mean !== undefined && <line x1={cx(i) - band * 0.32} x2={cx(i) + band * 0.32} y1={y(cm.mean)} y2={y(cm.mean)} stroke="#1f2a33" strokeWidth={2} />}
              {slipMeans
                .filter((s) => s.conditionId === c.id)
                .map((s, k, arr) => (
                  <circle
                    key={s.coverslipId}
                    cx={cx(i) + (arr.length > 1 ? (k / (arr.length - 1) - 0.5) * band * 0.3 : 0)}
                    cy={y(s.mean as number)}
                    r={6.5}
                    fill={coverslipColour(slipIndex.get(s.coverslipId) ?? 0)}
                    stroke="#1f2a33"
                    strokeWidth={1.2}
                  >
                    <title>{`${s.coverslipName}: mean ${fmtNum(s.mean)} (${s.n} cells)`}</title>
                  </circle>
                ))}
            </g>
          );
        })}
      </svg>
      <figcaption className="mt-1 text-xs text-ink-soft">
        Small dots: cells, coloured by coverslip. Large ringed markers: coverslip means{['pearson', 'spearman', 'kendallTauB'].includes(coefficient) ? " (through Fisher's z)" : ''}. Bar: mean of
        coverslip means.
      </figcaption>
    </figure>
  );
}
