/**
 * Coefficients of the selected cell (or the whole field) computed live in the browser by the same engine the
 * runs use (shared/analysis), clearly marked as a preview: no background subtraction, thresholds as set in
 * the pixel scatter, no randomization test. Runs with an approved recipe give the numbers that count.
 */
import type { RegionResult } from '@shared/analysis/types';
import { PREVIEW_KEYS, byKey, isPixelEntry } from '@shared/coefficients';
import { formatFixed } from '@shared/format/number';
import { Badge } from '@/components';
import { plural } from '@shared/format/plural';

/** The measures the preview shows: the registry's `preview` entries (shared/coefficients.ts). */
export const PREVIEW_COEFFICIENTS = PREVIEW_KEYS.map((k) => byKey(k)).filter(isPixelEntry);

/** Three decimals; a value that rounds to zero is shown as 0.000, never "-0.000" (shared/format/number.ts). */
export const fmtCoef = (v: number | null | undefined) => formatFixed(v, 3);

export function LivePreview({ result, regionName, t1, t2, ms, pending, stale, unit = 'pixel' }: { result: RegionResult | null; regionName: string; t1: number; t2: number; ms: number; pending: boolean; stale: boolean; unit?: 'pixel' | 'voxel' }) {
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
              {PREVIEW_COEFFICIENTS.map((c) => (
                <tr key={c.key} className="border-b border-ink/5 last:border-0">
                  <th scope="row" className="py-0.5 text-left font-normal text-ink-soft" title={c.description}>
                    {c.label}
                  </th>
                  <td className="py-0.5 text-right font-mono" data-coef={c.key}>
                    {fmtCoef(result[c.key])}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {stale && <p className="mt-1 text-xs text-ink-soft">Updating for the new thresholds or outline…</p>}
          <p className="mt-1 text-xs text-ink-faint">
            {plural(result.pixels, unit)} · T1 {round(t1)}, T2 {round(t2)} · raw values, no background subtraction, no randomization test · {ms.toFixed(0)} ms in the browser.
            A run with an approved recipe gives the recorded numbers.
          </p>
        </>
      )}
    </section>
  );
}

const round = (v: number) => (Number.isInteger(v) ? v : Number(v.toPrecision(4)));
