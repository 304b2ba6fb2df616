/** Chooses where measurements come from: the latest per cell among a recipe's runs, or one run. */
import { inputClass } from '@/components';
import { useMeasurementSources } from '../api/useMeasurementSources';
import { formatDateTime } from '@shared/format/datetime';
import { plural } from '@shared/format/plural';

export function SourceSelect({ studyId, recipeId, runId, onChange }: { studyId: number; recipeId: string | null; runId: string | null; onChange: (v: { recipeId: string | null; runId: string | null }) => void }) {
  const sources = useMeasurementSources(studyId);
  const value = runId ? `run:${runId}` : recipeId ? `recipe:${recipeId}` : '';
  return (
    <label className="flex flex-col gap-1 text-sm font-medium">
      Measurements from
      <select
        className={inputClass()}
        value={value}
        onChange={(e) => {
          const [kind, id] = e.target.value.split(':');
          onChange({ recipeId: kind === 'recipe' ? id : null, runId: kind === 'run' ? id : null });
        }}
      >
        <option value="">latest recipe used</option>
        {sources.data?.recipes.map((r) => (
          <optgroup key={r.recipeId} label={`${r.name} v${r.version}`}>
            <option value={`recipe:${r.recipeId}`}>
              {r.name} v{r.version}: latest per cell ({plural(r.runs.length, 'run')})
            </option>
            {r.runs.map((run) => (
              <option key={run.id} value={`run:${run.id}`}>
                run {run.id} · {formatDateTime(run.createdAt)} · {plural(run.measurements, 'cell')}{run.provisional ? ' · provisional' : ''}
              </option>
            ))}
          </optgroup>
        ))}
      </select>
    </label>
  );
}
