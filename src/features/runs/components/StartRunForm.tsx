/**
 * Start a run in a study: a recipe version (approved ones first; others make provisional numbers) and a scope.
 * The server checks the scope's fields against the recipe first; when some cannot be measured, a dialog lists
 * them with a link to fix each, and the run can start on the ready ones.
 */
import { useState } from 'react';
import { Link } from 'react-router';
import { Button, Dialog, ErrorNotice, inputClass, cx } from '@/components';
import { useRecipes } from '@/features/recipes';
import { useStudy } from '@/features/studies';
import type { RunCheckResponse, RunScopeKind } from '@shared/schemas/runs';
import { useStartRun } from '../api/useStartRun';
import { useCheckRun } from '../api/useCheckRun';
import { plural } from '@shared/format/plural';

/** A coverslip's name as written, with the word "Coverslip" only when the name does not already say it ("Coverslip 1", never "Coverslip Coverslip 1"). */
export function coverslipLabel(name: string) {
  return /coverslip/i.test(name) ? name : `Coverslip ${name}`;
}

export function StartRunForm({ studyId, onStarted }: { studyId: number; onStarted?: (runId: number) => void }) {
  const recipes = useRecipes(['approved', 'submitted', 'draft', 'returned']);
  const study = useStudy(studyId);
  const start = useStartRun();
  const check = useCheckRun();
  const [blockedOpen, setBlockedOpen] = useState(false);
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
        const body = { recipeId: chosen.id, scope: { kind: kind as RunScopeKind, id: Number(id) } };
        check.mutate(body, {
          onSuccess: (c) => {
            if (c.blocked.length) setBlockedOpen(true);
            else start.mutate(body, { onSuccess: (r) => onStarted?.(r.id) });
          },
        });
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
      <Button type="submit" variant="primary" disabled={!chosen} pending={check.isPending || start.isPending}>
        Start run
      </Button>
      <ErrorNotice error={check.error ?? start.error} className="w-full" />
      {check.data && chosen && (
        <BlockedFieldsDialog
          open={blockedOpen}
          onClose={() => setBlockedOpen(false)}
          blocked={check.data.blocked}
          readyCount={check.data.ready.length}
          pending={start.isPending}
          onStartReady={() =>
            start.mutate(
              { recipeId: chosen.id, scope: { kind: kind as RunScopeKind, id: Number(id) }, onlyReady: true },
              {
                onSuccess: (r) => {
                  setBlockedOpen(false);
                  onStarted?.(r.id);
                },
              },
            )
          }
        />
      )}
    </form>
  );
}

/** The fields the recipe cannot measure, each with its problem and a link to where it is fixed; starts on the ready ones. */
function BlockedFieldsDialog({
  open,
  onClose,
  blocked,
  readyCount,
  pending,
  onStartReady,
}: {
  open: boolean;
  onClose: () => void;
  blocked: RunCheckResponse['blocked'];
  readyCount: number;
  pending: boolean;
  onStartReady: () => void;
}) {
  return (
    <Dialog
      open={open}
      onClose={onClose}
      width="lg"
      title={`${plural(blocked.length, 'field')} cannot be measured with this recipe`}
      description={`${blocked.length === 1 ? 'Fix it first, or leave it out' : 'Fix them first, or leave them out'}: ${readyCount ? `${plural(readyCount, 'field')} ${readyCount === 1 ? 'is' : 'are'} ready.` : 'no field of this choice is ready.'}`}
      footer={
        <>
          <Button onClick={onClose}>Cancel</Button>
          {readyCount > 0 && (
            <Button variant="primary" onClick={onStartReady} pending={pending} data-autofocus>
              Start on {plural(readyCount, 'ready field')}
            </Button>
          )}
        </>
      }
    >
      <ul className="flex max-h-80 flex-col gap-2 overflow-y-auto text-sm">
        {blocked.map((b) => (
          <li key={b.fieldId} className="rounded-md border border-ink/10 px-3 py-2">
            <p className="font-medium">{b.fieldName}</p>
            <p className="text-ink-soft">{b.problem}</p>
            <Link className="text-accent-dark underline-offset-2 hover:underline" to={b.fixUrl}>
              Fix {b.fixUrl.startsWith('/recipes/') ? 'the recipe' : b.fixUrl.startsWith('/instruments/') ? 'the instrument' : 'the field'}
            </Link>
          </li>
        ))}
      </ul>
    </Dialog>
  );
}
