/** Chooses where measurements come from: the latest per cell among a recipe's runs, or one run. */
import { inputClass } from '@/components';
import { useMeasurementSources } from '../api/useMeasurementSources';

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
              {r.name} v{r.version}: latest per cell ({r.runs.length} run{r.runs.length === 1 ? '' : 's'})
            </option>
            {r.runs.map((run) => (
              <option key={run.id} value={`run:${run.id}`}>
                run {run.id} · {run.createdAt.slice(0, 16).replace('T', ' ')} · {run.measurements} cells{run.provisional ? ' · provisional' : ''}
              </option>
            ))}
          </optgroup>
        ))}
      </select>
    </label>
  );
}
