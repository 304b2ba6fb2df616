/** Fields done out of the total, as a bar and in words, with the field being computed. */
import type { RunSummary } from '@shared/schemas/runs';
import { cx } from '@/components';
import { plural } from '@shared/format/plural';

export function RunProgress({ run }: { run: RunSummary }) {
  const pct = run.fieldsTotal ? Math.round((100 * run.fieldsDone) / run.fieldsTotal) : 0;
  const active = run.status === 'queued' || run.status === 'running';
  return (
    <div className="min-w-40">
      <div className="h-2 w-full overflow-hidden rounded-full bg-ink/10" role="progressbar" aria-valuemin={0} aria-valuemax={run.fieldsTotal} aria-valuenow={run.fieldsDone} aria-label="Fields done">
        <div className={cx('h-full rounded-full', run.fieldsFailed ? 'bg-warn' : 'bg-accent', active && 'transition-[width]')} style={{ width: `${pct}%` }} />
      </div>
      <div className="mt-1 text-xs text-ink-soft">
        {run.fieldsDone} of {plural(run.fieldsTotal, 'field')}
        {run.fieldsFailed ? `, ${run.fieldsFailed} failed` : ''}
        {active && run.currentField ? ` · now: ${run.currentField}` : ''}
      </div>
    </div>
  );
}

const STATUS: Record<RunSummary['status'], string> = { queued: 'Waiting', running: 'Working', done: 'Finished', failed: 'Failed', partial: 'Finished with failures' };
export const runStatusLabel = (s: RunSummary['status']) => STATUS[s];
