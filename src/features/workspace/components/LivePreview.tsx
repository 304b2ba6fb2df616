/**
 * Coefficients of the selected cell (or the whole field) computed live in the browser by the same engine the
 * runs use (shared/analysis), clearly marked as a preview: no background subtraction, thresholds as set in
 * the pixel scatter, no randomization test. Runs with an approved recipe give the numbers that count.
 */
import type { RegionResult } from '@shared/analysis/types';
import { Badge } from '@/components';
import { plural } from '@shared/format/plural';

export const COEFFICIENTS: { key: keyof RegionResult; label: string; title: string }[] = [
  { key: 'pearson', label: "Pearson's r", title: 'linear correlation' },
  { key: 'spearman', label: "Spearman's ρ", title: 'rank correlation (average ranks for ties)' },
  { key: 'kendallTauB', label: "Kendall's τ-b", title: 'rank concordance with tie correction (Kendall 1945)' },
  { key: 'distanceCorrelation', label: 'Distance correlation', title: 'dCor (Székely, Rizzo & Bakirov 2007), not squared' },
  { key: 'mandersM1', label: "Manders' M1", title: 'share of channel 1 intensity where channel 2 is above its threshold' },
  { key: 'mandersM2', label: "Manders' M2", title: 'share of channel 2 intensity where channel 1 is above its threshold' },
  { key: 'overlap', label: 'Overlap coefficient', title: "Manders' overlap Σxy / √(Σx² Σy²)" },
  { key: 'k1', label: 'k1', title: 'Σxy / Σx²' },
  { key: 'k2', label: 'k2', title: 'Σxy / Σy²' },
  { key: 'icq', label: 'ICQ', title: "Li's intensity correlation quotient" },
];

/** Three decimals; a value that rounds to zero is shown as 0.000, never "-0.000". */
export const fmtCoef = (v: number | null | undefined) => {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const s = v.toFixed(3);
  return /^-0\.0+$/.test(s) ? s.slice(1) : s;
};

export function LivePreview({ result, regionName, t1, t2, ms, pending, stale }: { result: RegionResult | null; regionName: string; t1: number; t2: number; ms: number; pending: boolean; stale: boolean }) {
  return (
    <section aria-label="Live coefficients (preview)" data-testid="live-preview">
      <div className="flex items-center justify-between">
        <h3 className="text-sm font-semibold">Coefficients of {regionName}</h3>
        <Badge tone="accent">preview</Badge>
      </div>
      {!result ? (
        <p className="mt-2 text-sm text-ink-soft">{pending ? 'Computing…' : 'Select a cell to see its coefficients.'}</p>
      ) : (
        <>
          <table className={`mt-2 w-full text-sm ${stale ? 'opacity-60' : ''}`}>
            <tbody>
              {COEFFICIENTS.map((c) => (
                <tr key={c.key} className="border-b border-ink/5 last:border-0">
                  <th scope="row" className="py-0.5 text-left font-normal text-ink-soft" title={c.title}>
                    {c.label}
                  </th>
                  <td className="py-0.5 text-right font-mono" data-coef={c.key}>
                    {fmtCoef(result[c.key] as number | null)}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {stale && <p className="mt-1 text-xs text-ink-soft">Updating for the new thresholds or outline…</p>}
          <p className="mt-1 text-xs text-ink-faint">
            {plural(result.pixels, 'pixel')} · T1 {round(t1)}, T2 {round(t2)} · raw values, no background subtraction, no randomization test · {ms.toFixed(0)} ms in the browser.
            A run with an approved recipe gives the recorded numbers.
          </p>
        </>
      )}
    </section>
  );
}

const round = (v: number) => (Number.isInteger(v) ? v : Number(v.toPrecision(4)));
