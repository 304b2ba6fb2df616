/** Everything on the Compare page below the controls: sentence, warnings, SuperPlot with exports, statistics, histograms. */
import { useRef, useState } from 'react';
import type { Comparison } from '@shared/schemas/compare';
import { Button, Caution, ErrorNotice } from '@/components';
import { SuperPlot, SuperPlotLegend } from './SuperPlot';
import { StatsTable } from './StatsTable';
import { Histograms } from './Histograms';
import { ProvisionalBadge } from '@/features/recipes';
import { downloadPng, downloadSvg } from '../lib/exportImage';
import { sourceText } from '../lib/sourceText';

export function ComparePanel({ data, fileBase, csvQuery }: { data: Comparison; fileBase: string; csvQuery: string }) {
  const svg = useRef<SVGSVGElement>(null);
  const [err, setErr] = useState<unknown>(null);
  const name = `${fileBase}-${data.coefficient}`;
  /** cells whose values come from a run with a recipe version that was not approved */
  const provisional = data.omitted.provisional;
  /** every included cell (`points` may be a sample of them) */
  const total = data.pointsTotal ?? data.points.length;
  return (
    <div className="space-y-6">
      {provisional > 0 && (
        <p className="flex max-w-4xl flex-wrap items-center gap-2 text-sm text-ink-soft" data-testid="compare-provisional">
          <ProvisionalBadge />
          {provisional === total ? 'Every value here comes' : `${provisional.toLocaleString('en')} of ${total.toLocaleString('en')} values come`} from provisional
          measurements (a recipe version not yet approved); the numbers may change.
        </p>
      )}
      <p className="max-w-4xl text-sm text-ink-soft" data-testid="compare-source">
        {sourceText(data)}
      </p>
      <p className="max-w-4xl rounded-md border border-ink/10 bg-white px-4 py-3 text-sm leading-relaxed" data-testid="compare-summary">
        {data.summary}
      </p>
      {data.warnings.length > 0 && (
        <Caution title="Read with care">
          <ul className="list-disc pl-5">
            {data.warnings.map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        </Caution>
      )}
      <section aria-labelledby="plot-h" className="rounded-lg border border-ink/10 bg-white p-4">
        <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
          <h2 id="plot-h" className="flex items-center gap-2">
            Cells, coverslips and conditions {provisional > 0 && <ProvisionalBadge />}
          </h2>
          <div className="flex flex-wrap gap-2">
            <Button size="sm" onClick={() => svg.current && downloadSvg(svg.current, `${name}.svg`)}>
              Save SVG
            </Button>
            <Button
              size="sm"
              onClick={async () => {
                setErr(null);
                try {
                  if (svg.current) await downloadPng(svg.current, `${name}.png`);
                } catch (e) {
                  setErr(e);
                }
              }}
            >
              Save PNG
            </Button>
            <a className="rounded-md border border-ink/20 bg-white px-2.5 py-1 text-sm font-medium hover:bg-ink/5" href={`/api/studies/${data.studyId}/compare/cells.csv?${csvQuery}`} download>
              Cells CSV
            </a>
            <a className="rounded-md border border-ink/20 bg-white px-2.5 py-1 text-sm font-medium hover:bg-ink/5" href={`/api/studies/${data.studyId}/compare/coverslips.csv?${csvQuery}`} download>
              Coverslips CSV
            </a>
          </div>
        </div>
        <ErrorNotice error={err} className="mb-2" />
        <SuperPlot ref={svg} data={data} />
        <SuperPlotLegend data={data} />
      </section>
      <section aria-labelledby="stats-h" className="rounded-lg border border-ink/10 bg-white p-4">
        <h2 id="stats-h" className="mb-3 flex items-center gap-2">
          Statistics {provisional > 0 && <ProvisionalBadge />}
        </h2>
        <StatsTable data={data} />
      </section>
      <section aria-labelledby="hist-h" className="rounded-lg border border-ink/10 bg-white p-4">
        <h2 id="hist-h" className="mb-3">
          Distributions
        </h2>
        <Histograms data={data} />
      </section>
    </div>
  );
}

