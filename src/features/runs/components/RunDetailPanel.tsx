/** One run: its recipe settings in sentences, and each field's status (with the message when a field failed). */
import { Badge, Caution, ErrorNotice, Loading } from '@/components';
import { describeSettings } from '@shared/schemas/recipes';
import { ProvisionalBadge } from '@/features/recipes';
import { useRun } from '../api/useRun';
import { RunProgress, runStatusLabel } from './RunProgress';
import { formatDateTime } from '@shared/format/datetime';
import { plural, noun } from '@shared/format/plural';

export function RunDetailPanel({ id }: { id: number }) {
  const q = useRun(id);
  if (q.isPending) return <Loading />;
  if (q.error) return <ErrorNotice error={q.error} />;
  const r = q.data;
  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-center gap-2">
        <h2 className="text-base font-semibold">
          Run #{r.id}: {r.recipe.name} v{r.recipe.version} on {r.scope.kind} {r.scope.name}
        </h2>
        <Badge>{runStatusLabel(r.status)}</Badge>
        {r.provisional && <ProvisionalBadge />}
      </div>
      {r.provisional && <Caution>This run used a recipe version that was not approved; its {plural(r.measurements, 'measurement')} {noun(r.measurements, 'is', 'are')} provisional.</Caution>}
      <RunProgress run={r} />
      <p className="text-xs text-ink-soft">
        Engine {r.engineVersion ?? '—'} · seed {r.seed} · started {formatDateTime(r.startedAt)}
        {r.finishedAt ? ` · finished ${formatDateTime(r.finishedAt)}` : ''} · {plural(r.measurements, 'cell')} measured
      </p>
      <table className="w-full text-sm">
        <thead className="text-left text-ink-soft">
          <tr>
            <th className="py-1 font-medium">Field</th>
            <th className="py-1 font-medium">Status</th>
            <th className="py-1 font-medium">Cells</th>
            <th className="py-1 font-medium">Message</th>
          </tr>
        </thead>
        <tbody>
          {r.fields.map((f) => (
            <tr key={f.fieldId} className="border-t border-ink/10">
              <td className="py-1">{f.name}</td>
              <td className="py-1">{f.status}</td>
              <td className="py-1">{f.measurements}</td>
              <td className="py-1 text-danger">{f.error ?? ''}</td>
            </tr>
          ))}
        </tbody>
      </table>
      <details className="text-sm">
        <summary className="cursor-pointer text-ink-soft">Settings used</summary>
        <ul className="mt-2 space-y-1">
          {describeSettings(r.settings).map((s) => (
            <li key={s.key}>
              <span className="font-medium">{s.label}:</span> {s.sentence}
            </li>
          ))}
        </ul>
      </details>
    </div>
  );
}
