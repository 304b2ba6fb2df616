/** An instrument's calibration versions, newest first; choosing one shows it. */
import { EmptyState, cx, focusRing } from '@/components';
import { RecipeStatusBadge } from '@/features/recipes';
import type { CalibrationSummary } from '@shared/schemas/instruments';
import { formatDateTime } from '@shared/format/datetime';

export function CalibrationVersions({ versions, selected, onSelect }: { versions: CalibrationSummary[]; selected: number | null; onSelect: (id: number) => void }) {
  if (!versions.length) return <EmptyState title="No calibration yet">Start a draft: give the channel shift measured on beads and the bleed-through measured on single-label controls.</EmptyState>;
  return (
    <ul className="space-y-1" aria-label="Calibration versions">
      {versions.map((v) => (
        <li key={v.id}>
          <button
            type="button"
            aria-current={v.id === selected ? 'true' : undefined}
            onClick={() => onSelect(v.id)}
            className={cx('flex w-full flex-wrap items-center gap-2 rounded-md px-2 py-1.5 text-left text-sm', v.id === selected ? 'bg-accent-soft' : 'hover:bg-ink/5', focusRing)}
          >
            <span className="font-mono">v{v.version}</span>
            <RecipeStatusBadge status={v.status} />
            <span className="text-xs text-ink-soft">{formatDateTime(v.createdAt)}</span>
          </button>
        </li>
      ))}
    </ul>
  );
}
