/** The numbers behind a comparison: per condition, per coverslip, differences with intervals, tests. */
import type { Comparison } from '@shared/schemas/compare';
import { coverslipColor } from '../lib/palette';
import { formatMagnitude as f, formatPValue } from '@shared/format/number';

const th = 'px-2 py-1 text-left font-medium text-ink-soft';
const td = 'px-2 py-1';
const num = 'px-2 py-1 text-right font-mono';

export function StatsTable({ data }: { data: Comparison }) {
  const pct = `${Math.round(data.bootstrap.confidence * 100)}%`;
  const cond = (id: number) => data.conditions.find((c) => c.id === id)?.name ?? '';
  return (
    <div className="space-y-5 text-sm">
      <table className="w-full" data-testid="condition-table">
        <caption className="mb-1 text-left font-semibold">Conditions (coverslips are the replicates)</caption>
        <thead>
          <tr className="border-b border-ink/10">
            <th className={th}>condition</th>
            <th className={`${th} text-right`}>coverslips</th>
            <th className={`${th} text-right`}>cells</th>
            <th className={`${th} text-right`}>mean of coverslip means{data.averaging === 'fisher_z' ? ' (Fisher’s z)' : ''}</th>
            <th className={`${th} text-right`}>median of coverslip medians</th>
            <th className={`${th} text-right`}>{pct} interval</th>
          </tr>
        </thead>
        <tbody>
          {data.conditions.map((c) => (
            <tr key={c.id} className="border-b border-ink/5" data-condition={c.name}>
              <td className={td}>{c.name}</td>
              <td className={num}>{c.nCoverslips}</td>
              <td className={num}>{c.nCells}</td>
              <td className={num} data-testid="condition-mean">
                {f(c.mean)}
              </td>
              <td className={num} data-testid="condition-median">
                {f(c.median)}
              </td>
              <td className={num}>
                {f(c.ci.lower)} to {f(c.ci.upper)}
              </td>
            </tr>
          ))}
        </tbody>
      </table>

      {data.effects.length > 0 && (
        <table className="w-full">
          <caption className="mb-1 text-left font-semibold">Differences (hierarchical bootstrap: coverslips, then cells; {data.bootstrap.resamples} resamples, seed {data.bootstrap.seed})</caption>
          <thead>
            <tr className="border-b border-ink/10">
              <th className={th}>difference</th>
              <th className={`${th} text-right`}>estimate</th>
              <th className={`${th} text-right`}>{pct} interval</th>
            </tr>
          </thead>
          <tbody>
            {data.effects.map((e) => (
              <tr key={`${e.a}-${e.b}`} className="border-b border-ink/5">
                <td className={td}>{e.label}</td>
                <td className={num}>{f(e.estimate)}</td>
                <td className={num}>
                  {f(e.ci.lower)} to {f(e.ci.upper)}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}

      {data.tests.length > 0 && (
        <table className="w-full">
          <caption className="mb-1 text-left font-semibold">Tests on coverslip means</caption>
          <thead>
            <tr className="border-b border-ink/10">
              <th className={th}>test</th>
              <th className={`${th} text-right`}>statistic</th>
              <th className={`${th} text-right`}>df</th>
              <th className={`${th} text-right`}>p</th>
              <th className={th}>how</th>
            </tr>
          </thead>
          <tbody>
            {data.tests.map((t) => (
              <tr key={t.test} className="border-b border-ink/5">
                <td className={td}>{t.label}</td>
                <td className={num}>{f(t.statistic)}</td>
                <td className={num}>{t.df.length ? t.df.map((d) => (Number.isInteger(d) ? d : d.toFixed(1))).join(', ') : '—'}</td>
                <td className={num}>{formatPValue(t.p)}</td>
                <td className={`${td} text-xs text-ink-soft`}>{t.note}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}

      <table className="w-full">
        <caption className="mb-1 text-left font-semibold">Coverslips</caption>
        <thead>
          <tr className="border-b border-ink/10">
            <th className={th}>condition</th>
            <th className={th}>coverslip</th>
            <th className={`${th} text-right`}>cells</th>
            <th className={`${th} text-right`}>mean{data.averaging === 'fisher_z' ? ' (Fisher’s z)' : ''}</th>
            <th className={`${th} text-right`}>median</th>
          </tr>
        </thead>
        <tbody>
          {data.coverslips.map((s) => (
            <tr key={s.id} className="border-b border-ink/5">
              <td className={td}>{cond(s.conditionId)}</td>
              <td className={td}>
                <span className="mr-1.5 inline-block h-2.5 w-2.5 rounded-full align-middle" style={{ background: coverslipColor(s.colorIndex) }} aria-hidden="true" />
                {s.name}
              </td>
              <td className={num}>{s.nCells}</td>
              <td className={num}>{f(s.mean)}</td>
              <td className={num}>{f(s.median)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
