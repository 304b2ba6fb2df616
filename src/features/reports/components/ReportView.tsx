/**
 * The read-only report (signed-in page and share link alike): what was compared, the replicate-aware plots,
 * the statistics with their plain sentence, per-condition summaries, representative fields with outlines, one
 * cell's pixel scatter, exclusions, provenance, the methods paragraph and the cautions. Everything comes from the
 * frozen snapshot; nothing is recomputed.
 */
import { useEffect, useState } from 'react';
import { SuperPlot, SuperPlotLegend } from '@/features/compare';
import { Badge, Caution } from '@/components';
import { CSV_TABLES, type CsvTable, type ReportCoefficient, type ReportDetail } from '@shared/schemas/reports';
import { formatCoefficient, labelOf } from '@shared/coefficients';
import { formatMagnitude, formatPValue } from '@shared/format/number';
import { CompositeFigure } from './CompositeFigure';
import { ScatterFigure } from './ScatterFigure';
import { ProvisionalBadge } from '@/features/recipes';
import './ReportView.css';
import { formatDateTime } from '@shared/format/datetime';
import { plural, noun } from '@shared/format/plural';

const TABLE_LABELS: Record<CsvTable, string> = { cells: 'Cells', coverslips: 'Coverslip means', conditions: 'Condition summaries', statistics: 'Statistics', exclusions: 'Exclusions' };

function Section({ title, children, id, provisional = false }: { title: string; children: React.ReactNode; id?: string; provisional?: boolean }) {
  return (
    <section id={id} className="report-section mb-6 rounded-lg border border-ink/10 bg-white p-5">
      <h2 className="mb-3 flex flex-wrap items-center gap-2">
        {title}
        {provisional && <ProvisionalBadge />}
      </h2>
      {children}
    </section>
  );
}

/** The report's name on paper and in the browser: the study, then the report title. */
export function reportHeading(study: string, title: string): string {
  return `${study} · ${title}`;
}

/** The printed pages' running header (from page 2 on): `heading` as a CSS string (quotes, backslashes and line breaks escaped). */
export function runningHeadCss(heading: string): string {
  const text = heading.replace(/[\r\n]+/g, ' ').replace(/[\\"]/g, (c) => `\\${c}`).replace(/</g, '\\3c ');
  const font = "font: 8pt 'IBM Plex Sans', system-ui, sans-serif; color: #4a5863;";
  return `@media print { @page { @top-left { content: "${text}"; ${font} } } @page :first { @top-left { content: none; } } }`;
}

/** The frozen comparison of one coefficient, drawn by Compare's replicate-aware plot. */
function CoefficientPlot({ report, k }: { report: ReportDetail; k: ReportCoefficient }) {
  const comparison = report.snapshot.comparisons[k];
  if (!comparison || comparison.points.length === 0) return <p className="text-sm text-ink-soft">No measured cells for {labelOf(k)}.</p>;
  return (
    <figure className="report-figure">
      <SuperPlot data={comparison} />
      <SuperPlotLegend data={comparison} />
    </figure>
  );
}

export function ReportView({ report, csvHref, actions }: { report: ReportDetail; csvHref: (table: CsvTable) => string; actions?: React.ReactNode }) {
  const s = report.snapshot;
  const condName = new Map(s.conditions.map((c) => [c.id, c.name]));
  const [picked, setPicked] = useState<number | null>(s.scatter?.cellId ?? s.scatters[0]?.cellId ?? null);
  const pickable = new Set(s.scatters.map((x) => x.cellId));
  const shown = s.scatters.find((x) => x.cellId === picked) ?? s.scatter;
  const heading = reportHeading(s.study.name, report.title);
  // the browser's tab, and the title of a PDF printed from it
  useEffect(() => {
    const before = document.title;
    document.title = heading;
    return () => {
      document.title = before;
    };
  }, [heading]);
  return (
    <article className="report-page mx-auto max-w-5xl" aria-labelledby="report-title">
      <style>{runningHeadCss(heading)}</style>
      <header className="mb-6 border-b border-ink/10 pb-4">
        <div className="flex flex-wrap items-start justify-between gap-4">
          <div className="min-w-0">
            <p className="text-xs uppercase tracking-wide text-ink-faint">Syntopy report · study “{s.study.name}”</p>
            <h1 id="report-title" className="mt-1">
              {report.title}
            </h1>
            <p className="mt-1 text-sm text-ink-soft">
              Frozen {formatDateTime(s.createdAt)}
              {report.createdBy && ` by ${report.createdBy}`} · {s.coefficients.map((k) => labelOf(k)).join(', ')}
            </p>
            <div className="mt-2 flex flex-wrap gap-2">
              {s.anyProvisional && (
                <span className="inline-flex items-center gap-1.5 text-xs text-warn">
                  <ProvisionalBadge /> recipe not approved when run
                </span>
              )}
              {s.recipes.map((r) => (
                <Badge key={r.id} tone="accent">
                  {r.name} v{r.version}
                </Badge>
              ))}
              {s.engineVersions.map((e) => (
                <Badge key={e}>{e}</Badge>
              ))}
            </div>
          </div>
          {actions && <div className="no-print flex flex-wrap gap-2">{actions}</div>}
        </div>
        {report.notes && <p className="mt-3 max-w-3xl whitespace-pre-wrap text-sm">{report.notes}</p>}
      </header>

      {s.anyProvisional && (
        <Caution title="Provisional results" className="mb-6">
          Some measurements come from a recipe version that was not approved when it ran.
        </Caution>
      )}

      <Section title="Result" provisional={s.anyProvisional}>
        <ul className="space-y-2">
          {s.statistics.map((st) => (
            <li key={st.coefficient} className="text-sm">
              <span className="font-medium">{labelOf(st.coefficient)}.</span> {st.sentence}
            </li>
          ))}
        </ul>
        <div className="mt-4 overflow-x-auto">
          <table className="w-full text-left text-sm">
            <caption className="sr-only">Statistics on coverslip-level summaries</caption>
            <thead className="border-b border-ink/15 text-xs text-ink-soft">
              <tr>
                <th className="py-1 pr-3">Coefficient</th>
                <th className="py-1 pr-3">Test</th>
                <th className="py-1 pr-3 text-right">Statistic</th>
                <th className="py-1 pr-3 text-right">df</th>
                <th className="py-1 pr-3 text-right">p</th>
                <th className="py-1 pr-3">Effect (95% interval)</th>
              </tr>
            </thead>
            <tbody>
              {s.statistics.flatMap((st) => [
                <tr key={st.coefficient} className="border-b border-ink/5">
                  <td className="py-1 pr-3">{labelOf(st.coefficient)}</td>
                  <td className="py-1 pr-3">{st.test}</td>
                  <td className="py-1 pr-3 text-right font-mono">{formatMagnitude(st.statistic)}</td>
                  <td className="py-1 pr-3 text-right font-mono">{formatMagnitude(st.df)}</td>
                  <td className="py-1 pr-3 text-right font-mono">{formatPValue(st.p)}</td>
                  <td className="py-1 pr-3">
                    {st.effect === null ? '—' : `${formatMagnitude(st.effect)}${st.ciLow !== null ? ` (${formatMagnitude(st.ciLow)} to ${formatMagnitude(st.ciHigh)})` : ''}`}
                    {st.effectLabel && <span className="text-xs text-ink-soft"> {st.effectLabel}</span>}
                  </td>
                </tr>,
                ...st.alsoTests.map((o) => (
                  <tr key={`${st.coefficient}-${o.test}`} className="border-b border-ink/5 text-ink-soft">
                    <td className="py-1 pr-3" />
                    <td className="py-1 pr-3">{o.test}</td>
                    <td className="py-1 pr-3 text-right font-mono">{formatMagnitude(o.statistic)}</td>
                    <td className="py-1 pr-3 text-right font-mono">{formatMagnitude(o.df)}</td>
                    <td className="py-1 pr-3 text-right font-mono">{formatPValue(o.p)}</td>
                    <td className="py-1 pr-3" />
                  </tr>
                )),
              ])}
            </tbody>
          </table>
        </div>
      </Section>

      <Section title="Cells by coverslip" provisional={s.anyProvisional}>
        <div className="grid gap-6">
          {s.coefficients.map((k) => (
            <div key={k} className="report-keep">
              <h3 className="mb-1 text-sm font-semibold">{labelOf(k)}</h3>
              <CoefficientPlot report={report} k={k} />
            </div>
          ))}
        </div>
      </Section>

      <Section title="Per-condition summaries" provisional={s.anyProvisional}>
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="border-b border-ink/15 text-xs text-ink-soft">
              <tr>
                <th className="py-1 pr-3">Coefficient</th>
                <th className="py-1 pr-3">Condition</th>
                <th className="py-1 pr-3 text-right">Cells</th>
                <th className="py-1 pr-3 text-right">Coverslips</th>
                <th className="py-1 pr-3 text-right">Mean of coverslip means</th>
                <th className="py-1 pr-3 text-right">SD</th>
                <th className="py-1 pr-3 text-right">Median (cells)</th>
                <th className="py-1 pr-3 text-right">Range</th>
              </tr>
            </thead>
            <tbody>
              {s.conditionSummaries.map((c) => (
                <tr key={`${c.coefficient}-${c.conditionId}`} className="border-b border-ink/5">
                  <td className="py-1 pr-3">{labelOf(c.coefficient)}</td>
                  <td className="py-1 pr-3">{c.conditionName}</td>
                  <td className="py-1 pr-3 text-right font-mono">{c.cells}</td>
                  <td className="py-1 pr-3 text-right font-mono">{c.coverslips}</td>
                  <td className="py-1 pr-3 text-right font-mono">{formatCoefficient(c.coefficient, c.mean)}</td>
                  <td className="py-1 pr-3 text-right font-mono">{formatCoefficient(c.coefficient, c.sd)}</td>
                  <td className="py-1 pr-3 text-right font-mono">{formatCoefficient(c.coefficient, c.median)}</td>
                  <td className="py-1 pr-3 text-right font-mono">
                    {formatCoefficient(c.coefficient, c.min)} – {formatCoefficient(c.coefficient, c.max)}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </Section>

      <Section title="Representative fields">
        {s.composites.length === 0 ? (
          <p className="text-sm text-ink-soft">No fields.</p>
        ) : (
          <div className="grid gap-4 sm:grid-cols-2">
            {s.composites.map((c) => (
              <CompositeFigure
                key={c.fieldId}
                composite={c}
                conditionName={condName.get(c.conditionId) ?? ''}
                selectedCellId={shown?.cellId ?? null}
                pickable={pickable}
                onPick={setPicked}
              />
            ))}
          </div>
        )}
        {shown && (
          <div className="report-keep mt-6">
            <div className="mb-1 flex flex-wrap items-center gap-3">
              <h3 className="text-sm font-semibold">Pixel scatter of one cell</h3>
              {s.scatters.length > 1 && (
                <label className="no-print flex items-center gap-2 text-xs text-ink-soft">
                  Cell
                  <select aria-label="Cell for the pixel scatter" className="rounded border border-ink/20 bg-white px-2 py-0.5 text-sm text-ink" value={shown.cellId} onChange={(e) => setPicked(Number(e.target.value))}>
                    {s.scatters.map((x) => (
                      <option key={x.cellId} value={x.cellId}>
                        {condName.get(s.cells.find((c) => c.cellId === x.cellId)?.conditionId ?? 0) ?? ''} · {x.fieldName} · {x.cellName}
                      </option>
                    ))}
                  </select>
                  <span>or click an outline above</span>
                </label>
              )}
            </div>
            <ScatterFigure scatter={shown} />
          </div>
        )}
      </Section>

      <Section title="Data used">
        <ul className="mb-3 list-disc pl-5 text-sm">
          {s.conditions.map((c) => (
            <li key={c.id}>
              <span className="font-medium">{c.name}</span>: {plural(c.cellsIncluded, 'cell')} on {plural(c.coverslipsUsed, 'coverslip')}
              {c.cellsExcluded > 0 && `, ${c.cellsExcluded} excluded`} ({c.coverslips.map((x) => `${x.name}: ${x.cellsIncluded}`).join(', ')})
            </li>
          ))}
        </ul>
        <p className="text-sm text-ink-soft">
          {plural(s.fields.length, 'field')}; {noun(s.runs.length, 'run')} {s.runs.map((r) => `#${r.id}${r.provisional ? ' (provisional)' : ''}`).join(', ') || 'none'}.
          {s.saturation.fieldsWithSaturation > 0 && ` ${plural(s.saturation.fieldsWithSaturation, 'field')} ${noun(s.saturation.fieldsWithSaturation, 'contains', 'contain')} saturated pixels.`}
        </p>
        {s.exclusions.length > 0 && (
          <div className="mt-3 overflow-x-auto">
            <h3 className="mb-1 text-sm font-semibold">Excluded cells</h3>
            <table className="w-full text-left text-sm">
              <thead className="border-b border-ink/15 text-xs text-ink-soft">
                <tr>
                  <th className="py-1 pr-3">Cell</th>
                  <th className="py-1 pr-3">Where</th>
                  <th className="py-1 pr-3">Reason</th>
                  <th className="py-1 pr-3">By</th>
                </tr>
              </thead>
              <tbody>
                {s.exclusions.map((x) => (
                  <tr key={x.cellId} className="border-b border-ink/5">
                    <td className="py-1 pr-3">{x.cellName}</td>
                    <td className="py-1 pr-3">
                      {x.conditionName} · {x.coverslipName} · {x.fieldName}
                    </td>
                    <td className="py-1 pr-3">{x.reason || '—'}</td>
                    <td className="py-1 pr-3">{x.excludedBy ?? '—'}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
        <div className="no-print mt-4 flex flex-wrap items-center gap-2 text-sm">
          <span className="text-ink-soft">Download tables (CSV):</span>
          {CSV_TABLES.map((t) => (
            <a key={t} href={csvHref(t)} download className="rounded border border-ink/20 bg-white px-2 py-0.5 hover:bg-ink/5">
              {TABLE_LABELS[t]}
            </a>
          ))}
        </div>
      </Section>

      <Section title="Methods" id="methods">
        <div className="space-y-3 text-sm leading-relaxed" data-testid="methods">
          {s.methods.split('\n\n').map((p, i) =>
            p.startsWith('References\n') ? (
              <div key={i}>
                <h3 className="mb-1 text-sm font-semibold">References</h3>
                <ol className="space-y-1 text-xs">
                  {p
                    .split('\n')
                    .slice(1)
                    .map((r) => (
                      <li key={r}>{r}</li>
                    ))}
                </ol>
              </div>
            ) : (
              <p key={i}>{p}</p>
            ),
          )}
        </div>
      </Section>

      <Section title="Cautions">
        <ul className="list-disc space-y-1 pl-5 text-sm">
          {s.cautions.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
      </Section>
    </article>
  );
}
