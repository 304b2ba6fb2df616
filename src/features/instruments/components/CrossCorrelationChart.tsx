/**
 * Van Steensel's cross-correlation curves as two small plots: Pearson's r as channel 2 is moved along x
 * (left) and along y (right), each through the measured shift's nearest whole pixel on the other axis; the
 * measured (sub-pixel) shift is a dashed line, 0 a thin one. The numbers are also given as a table for
 * screen readers and copying.
 */
import { formatFixed } from '@shared/format/number';
import type { CrossCorrelationCurves } from '@shared/schemas/instruments';

const W = 220, H = 140, PAD = { l: 34, r: 8, t: 10, b: 28 };

function Plot({ axis, shifts, r, marked, other, otherAxis }: { axis: 'x' | 'y'; shifts: number[]; r: (number | null)[]; marked: number; other: number; otherAxis: 'x' | 'y' }) {
  const lo = shifts[0], hi = shifts[shifts.length - 1];
  const vals = r.filter((v): v is number => v !== null);
  const yMin = Math.min(0, ...vals), yMax = Math.max(1e-9, ...vals);
  const sx = (s: number) => PAD.l + ((s - lo) / Math.max(1, hi - lo)) * (W - PAD.l - PAD.r);
  const sy = (v: number) => PAD.t + (1 - (v - yMin) / (yMax - yMin)) * (H - PAD.t - PAD.b);
  // one polyline per run of defined values
  const runs: string[] = [];
  let cur: string[] = [];
  r.forEach((v, i) => {
    if (v === null) {
      if (cur.length) runs.push(cur.join(' '));
      cur = [];
    } else cur.push(`${sx(shifts[i]).toFixed(1)},${sy(v).toFixed(1)}`);
  });
  if (cur.length) runs.push(cur.join(' '));
  const label = `r against the shift of channel 2 along ${axis}, from ${lo} to ${hi} px, with ${otherAxis} held at ${other} px; measured shift ${formatFixed(marked, 2)} px`;
  return (
    <figure className="m-0">
      <svg viewBox={`0 0 ${W} ${H}`} className="w-full max-w-[16rem]" role="img" aria-label={label} data-testid={`curve-${axis}`}>
        <line x1={PAD.l} x2={W - PAD.r} y1={sy(0)} y2={sy(0)} className="stroke-ink/20" />
        {lo <= 0 && hi >= 0 && <line x1={sx(0)} x2={sx(0)} y1={PAD.t} y2={H - PAD.b} className="stroke-ink/20" />}
        {marked >= lo && marked <= hi && <line x1={sx(marked)} x2={sx(marked)} y1={PAD.t} y2={H - PAD.b} className="stroke-danger" strokeDasharray="4 3" data-testid={`curve-${axis}-mark`} />}
        {runs.map((pts, i) => (
          <polyline key={i} points={pts} fill="none" className="stroke-ink" strokeWidth={1.5} />
        ))}
        {r.map((v, i) => v !== null && <circle key={i} cx={sx(shifts[i])} cy={sy(v)} r={1.8} className="fill-ink" />)}
        <text x={PAD.l - 4} y={sy(yMax) + 4} textAnchor="end" className="fill-ink-soft text-[9px]">
          {formatFixed(yMax, 2)}
        </text>
        <text x={PAD.l - 4} y={sy(yMin) + 3} textAnchor="end" className="fill-ink-soft text-[9px]">
          {formatFixed(yMin, 2)}
        </text>
        <text x={sx(lo)} y={H - PAD.b + 12} textAnchor="middle" className="fill-ink-soft text-[9px]">
          {lo}
        </text>
        <text x={sx(hi)} y={H - PAD.b + 12} textAnchor="middle" className="fill-ink-soft text-[9px]">
          {hi}
        </text>
        <text x={(PAD.l + W - PAD.r) / 2} y={H - 4} textAnchor="middle" className="fill-ink-soft text-[10px]">
          shift along {axis} (px)
        </text>
      </svg>
      <figcaption className="text-xs text-ink-soft">
        Along {axis}, {otherAxis} held at {other} px: peak of the dashed line at {formatFixed(marked, 2)} px
      </figcaption>
    </figure>
  );
}

export function CrossCorrelationChart({ curves, dx, dy }: { curves: CrossCorrelationCurves; dx: number; dy: number }) {
  return (
    <div data-testid="cross-correlation">
      <div className="flex flex-wrap gap-4">
        <Plot axis="x" shifts={curves.shifts} r={curves.x} marked={dx} other={curves.through.dy} otherAxis="y" />
        <Plot axis="y" shifts={curves.shifts} r={curves.y} marked={dy} other={curves.through.dx} otherAxis="x" />
      </div>
      <details className="mt-1 text-xs">
        <summary className="cursor-pointer text-ink-soft">Curve values</summary>
        <table className="mt-1 font-mono">
          <thead>
            <tr>
              <th className="pr-3 text-left font-medium">shift (px)</th>
              <th className="pr-3 text-right font-medium">r along x</th>
              <th className="text-right font-medium">r along y</th>
            </tr>
          </thead>
          <tbody>
            {curves.shifts.map((s, i) => (
              <tr key={s}>
                <td className="pr-3">{s}</td>
                <td className="pr-3 text-right">{formatFixed(curves.x[i], 3)}</td>
                <td className="text-right">{formatFixed(curves.y[i], 3)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </details>
    </div>
  );
}
