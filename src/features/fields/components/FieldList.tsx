/**
 * A coverslip's fields: thumbnail (channel 1 green, channel 2 magenta), size, type, channel names, pixel
 * size, per-channel range and a saturation flag; each links to the field's page.
 */
import { useState } from 'react';
import { Link } from 'react-router';
import { Badge } from '@/components/Badge';
import { Button } from '@/components/Button';
import { ConfirmDialog } from '@/components/Dialog';
import { ErrorNotice } from '@/components/Caution';
import { Spinner } from '@/components/Spinner';
import { SATURATION_FLAG_FRACTION, type FieldSummary } from '@shared/schemas/fields';
import { useCoverslipFields } from '../api/useCoverslipFields';
import { useDeleteField } from '../api/useDeleteField';
import { fieldPreviewUrl } from '../api/fieldPreviewUrl';

const THUMB = 96;

const pct = (f: number) => (f === 0 ? '0 %' : f < 0.0001 ? '< 0.01 %' : `${(f * 100).toFixed(f < 0.01 ? 2 : 1)} %`);
const num = (v: number) => (Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(4))));

function saturationNote(f: FieldSummary) {
  const parts: string[] = [];
  (['ch1', 'ch2'] as const).forEach((k, i) => {
    const c = f.facts[k];
    if (c.saturatedFraction > SATURATION_FLAG_FRACTION) parts.push(`channel ${i + 1}: ${pct(c.saturatedFraction)} at the largest possible value`);
    else if ((c.plateauFraction ?? 0) > SATURATION_FLAG_FRACTION) parts.push(`channel ${i + 1}: ${pct(c.plateauFraction!)} stuck at ${num(c.max)} (clipped below full scale?)`);
  });
  return parts.join('; ');
}

export function FieldList({ coverslipId, studyId, canEdit = false }: { coverslipId: number; studyId?: number; canEdit?: boolean }) {
  const q = useCoverslipFields(coverslipId);
  const del = useDeleteField();
  const [confirm, setConfirm] = useState<FieldSummary | null>(null);
  if (q.isPending) return <Spinner size="sm" label="Loading fields…" />;
  if (q.isError) return <ErrorNotice error={q.error} />;
  const fields = q.data.fields;
  if (fields.length === 0) return <p className="text-xs text-ink-soft">No fields on this coverslip yet.</p>;
  return (
    <>
      <ul className="flex flex-col gap-2" aria-label="Fields">
        {fields.map((f) => {
          const href = studyId ? `/studies/${studyId}/fields/${f.id}` : undefined;
          const note = f.saturated ? saturationNote(f) : '';
          const names = f.channelNames.map((n, i) => n ?? `channel ${i + 1}`);
          return (
            <li key={f.id} className="flex gap-3 rounded-md border border-ink/10 bg-white p-2">
              <ThumbLink href={href} label={`Open ${f.name}`}>
                <img
                  src={fieldPreviewUrl(f.id, { max: THUMB * 2 })}
                  alt={`Preview of ${f.name}: ${names[0]} in green, ${names[1]} in magenta`}
                  width={THUMB}
                  height={Math.round((THUMB * f.height) / Math.max(1, f.width))}
                  loading="lazy"
                  className="block h-auto max-h-24 w-24 rounded bg-ink object-contain"
                />
              </ThumbLink>
              <div className="min-w-0 flex-1 text-sm">
                <div className="flex flex-wrap items-center gap-2">
                  {href ? (
                    <Link to={href} className="truncate font-medium text-accent-dark hover:underline">
                      {f.name}
                    </Link>
                  ) : (
                    <span className="truncate font-medium">{f.name}</span>
                  )}
                  {f.saturated && (
                    <Badge tone="warn">
                      <span title={note}>saturated pixels</span>
                    </Badge>
                  )}
                  {f.sizeZ > 1 && <Badge>{f.sizeZ} z slices</Badge>}
                </div>
                <p className="text-xs text-ink-soft">
                  {f.width}×{f.height} · {f.bitDepth}-bit {f.sampleFormat === 'float' ? 'float' : 'integer'}
                  {f.pixelSizeUm != null && ` · ${num(f.pixelSizeUm)} µm/pixel`}
                  {f.zStepUm != null && ` · ${num(f.zStepUm)} µm between slices`}
                </p>
                <dl className="mt-1 grid grid-cols-[auto_1fr] gap-x-2 text-xs">
                  {(['ch1', 'ch2'] as const).map((k, i) => (
                    <div key={k} className="contents">
                      <dt className={i === 0 ? 'text-[#1a7f37]' : 'text-[#a3279a]'}>{names[i]}</dt>
                      <dd className="text-ink-soft">
                        {num(f.facts[k].min)}–{num(f.facts[k].max)}, mean {num(f.facts[k].mean)}
                        {f.facts[k].saturatedFraction > 0 && f.sampleFormat === 'uint' && `, ${pct(f.facts[k].saturatedFraction)} at ${2 ** f.bitDepth - 1}`}
                      </dd>
                    </div>
                  ))}
                </dl>
                {note && <p className="mt-1 text-xs text-warn">{note}. Saturated pixels bias co-localization coefficients.</p>}
              </div>
              {canEdit && (
                <div className="self-start">
                  <Button size="sm" variant="quietDanger" onClick={() => setConfirm(f)} aria-label={`Delete ${f.name}`}>
                    Delete
                  </Button>
                </div>
              )}
            </li>
          );
        })}
      </ul>
      {confirm && (
        <ConfirmDialog
          open
          title={`Delete field “${confirm.name}”?`}
          confirmLabel="Delete field"
          message="Its cells go with it. If analysis results already refer to it, they are kept and the field is hidden instead."
          onClose={() => setConfirm(null)}
          onConfirm={async () => {
            await del.mutateAsync(confirm.id);
          }}
        />
      )}
    </>
  );
}

function ThumbLink({ href, label, children }: { href?: string; label: string; children: React.ReactNode }) {
  return href ? (
    <Link to={href} aria-label={label} className="shrink-0">
      {children}
    </Link>
  ) : (
    <div className="shrink-0">{children}</div>
  );
}

export default FieldList;
