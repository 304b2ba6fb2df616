/** Start a run in a study: a recipe version (approved ones first; others make provisional numbers) and a scope. */
import { useState } from 'react';
import { Button, ErrorNotice, inputClass, cx } from '@/components';
import { useRecipes } from '@/features/recipes';
import { useStudy } from '@/features/studies';
import type { RunScopeKind } from '@shared/schemas/runs';
import { useStartRun } from '../api/useStartRun';
import { plural } from '@shared/format/plural';

/** A coverslip's name as written, with the word "Coverslip" only when the name does not already say it ("Coverslip 1", never "Coverslip Coverslip 1"). */
export function coverslipLabel(name: string) {
  return /coverslip/i.test(name) ? name : `Coverslip ${name}`;
}

export function StartRunForm({ studyId, onStarted }: { studyId: number; onStarted?: (runId: number) => void }) {
  const recipes = useRecipes(['approved', 'submitted', 'draft', 'returned']);
  const study = useStudy(studyId);
  const start = useStartRun();
  const [recipeId, setRecipeId] = useState<number | null>(null);
  const [scope, setScope] = useState<string>(`study:${studyId}`);
  const list = [...(recipes.data ?? [])].sort((a, b) => Number(b.status === 'approved') - Number(a.status === 'approved') || a.name.localeCompare(b.name));
  const chosen = list.find((r) => r.id === recipeId) ?? list[0];
  const [kind, id] = scope.split(':');
  return (
    <form
      className="flex flex-wrap items-end gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        if (!chosen) return;
        start.mutate({ recipeId: chosen.id, scope: { kind: kind as RunScopeKind, id: Number(id) } }, { onSuccess: (r) => onStarted?.(r.id) });
      }}
    >
      <label className="flex flex-col gap-1 text-sm">
        <span className="font-medium">Recipe</span>
        <select className={cx(inputClass(false), 'w-auto')} value={chosen?.id ?? ''} onChange={(e) => setRecipeId(Number(e.target.value))}>
          {list.map((r) => (
            <option key={r.id} value={r.id}>
              {r.name} v{r.version}
              {r.status === 'approved' ? '' : ` (${r.status}: provisional)`}
            </option>
          ))}
        </select>
      </label>
      <label className="flex flex-col gap-1 text-sm">
        <span className="font-medium">Measure</span>
        <select className={cx(inputClass(false), 'w-auto')} value={scope} onChange={(e) => setScope(e.target.value)}>
          <option value={`study:${studyId}`}>The whole study</option>
          {study.data?.conditions.map((c) => (
            <optgroup key={c.id} label={c.name}>
              <option value={`condition:${c.id}`}>All of {c.name}</option>
              {c.coverslips.map((cs) => (
                <option key={cs.id} value={`coverslip:${cs.id}`}>
                  {coverslipLabel(cs.name)} · {c.name} ({plural(cs.fieldCount, 'field')})
                </option>
              ))}
            </optgroup>
          ))}
        </select>
      </label>
      <Button type="submit" variant="primary" disabled={!chosen} pending={start.isPending}>
        Start run
      </Button>
      <ErrorNotice error={start.error} className="w-full" />
    </form>
  );
}
