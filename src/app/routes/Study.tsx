/** Route module: one study: conditions and coverslips (create, rename, reorder, delete) and each coverslip's fields. */
import { useCallback, useState } from 'react';
import { useNavigate, useParams } from 'react-router';
import { CreateConditionRequest } from '@shared/schemas/studies';
import { ApiError } from '@/lib/api';
import { useStudy } from '@/features/studies';
import { useCreateCondition } from '@/features/studies';
import { useReorder } from '@/features/studies';
import { ConditionCard } from '@/features/studies';
import { NameDialog } from '@/features/studies';
import { EditStudyDialog } from '@/features/studies';
import { DeleteStudyDialog } from '@/features/studies';
import { StudyLinks } from '@/features/studies';
import { StudyInstrument } from '@/features/studies';
import { useMe } from '@/features/auth';
import { moved, refocusMove } from '@/features/studies';
import { Badge } from '@/components/Badge';
import { Button } from '@/components/Button';
import { SampleSheetIntake } from '@/features/fields';
import { Caution, ErrorNotice } from '@/components/Caution';
import { EmptyState } from '@/components/EmptyState';
import { PageHeader } from '@/components/PageHeader';
import { Loading } from '@/components/Spinner';
import { Component as NotFound } from './NotFound';

export function Component() {
  const studyId = Number(useParams().studyId);
  const study = useStudy(studyId);
  const me = useMe();
  const createCondition = useCreateCondition(studyId);
  const reorder = useReorder(studyId);
  const navigate = useNavigate();
  const [addingCondition, setAddingCondition] = useState(false);
  const [editing, setEditing] = useState(false);
  const [deleting, setDeleting] = useState(false);
  const [message, setMessage] = useState('');
  const announce = useCallback((m: string) => setMessage(m), []);

  if (!Number.isInteger(studyId) || studyId <= 0) return <NotFound />;
  if (study.isPending) return <Loading />;
  if (study.isError) {
    if (study.error instanceof ApiError && study.error.status === 404) return <NotFound />;
    return <ErrorNotice error={study.error} />;
  }
  const s = study.data;
  const canEdit = s.permissions.includes('edit_structure');

  const moveCondition = (i: number, dir: -1 | 1) => {
    const c = s.conditions[i];
    const conditionIds = moved(
      s.conditions.map((x) => x.id),
      i,
      dir,
    );
    reorder.mutate(
      { conditionIds },
      {
        onSuccess: () => {
          announce(`Condition ${c.name} moved to position ${i + dir + 1} of ${conditionIds.length}.`);
          refocusMove(`move-condition-${c.id}`, dir);
        },
        onError: (e) => announce(`Could not move ${c.name}: ${e.message}`),
      },
    );
  };

  return (
    <>
      <PageHeader
        trail={[{ to: '/studies', label: 'Studies' }]}
        title={s.name}
        description={
          <>
            {s.description && <span className="block whitespace-pre-line">{s.description}</span>}
            <span className="mt-1 block text-xs">
              {s.labName} · owner {s.ownerName} {s.isDemo && <Badge tone="warn">invented demo data</Badge>}
            </span>
            <span className="mt-1 block text-xs">
              <StudyInstrument instrument={s.defaultInstrument} linked={!!me.data?.roles.includes('facility_manager')} />
            </span>
          </>
        }
        actions={
          <>
            {canEdit && <Button onClick={() => setEditing(true)}>Edit study</Button>}
            {s.permissions.includes('delete') && (
              <Button variant="quietDanger" onClick={() => setDeleting(true)}>
                Delete study
              </Button>
            )}
          </>
        }
      />
      <div className="mb-5 flex flex-wrap items-center justify-between gap-3">
        <StudyLinks studyId={s.id} />
        <div className="flex flex-wrap items-center gap-2">
          {s.permissions.includes('edit_images') && <SampleSheetIntake studyId={s.id} />}
          {canEdit && (
            <Button variant="primary" onClick={() => setAddingCondition(true)}>
              Add condition
            </Button>
          )}
        </div>
      </div>

      <div role="status" aria-live="polite" className="sr-only">
        {message}
      </div>
      {reorder.isError && <ErrorNotice error={reorder.error} className="mb-4" />}

      {s.conditions.length === 0 ? (
        <EmptyState
          title="No conditions yet"
          action={
            canEdit && (
              <Button variant="primary" onClick={() => setAddingCondition(true)}>
                Add the first condition
              </Button>
            )
          }
        >
          A condition is one experimental treatment (for example “control” and “treated”); its coverslips are the replicates.
        </EmptyState>
      ) : (
        <div className="flex flex-col gap-4">
          {s.conditions.map((c, i) => (
            <ConditionCard key={c.id} study={s} condition={c} index={i} onMove={(dir) => moveCondition(i, dir)} announce={announce} />
          ))}
        </div>
      )}

      <Caution title="Reading co-localization" className="mt-8">
        Overlap at light-microscope resolution (about 200 nm laterally) is not molecular interaction. Saturated pixels, channel bleed-through, chromatic shift and
        unequal image adjustment all bias the coefficients.
      </Caution>

      <NameDialog
        open={addingCondition}
        onClose={() => setAddingCondition(false)}
        title="Add a condition"
        label="Condition name"
        submitLabel="Add condition"
        schema={CreateConditionRequest}
        save={(body) => createCondition.mutateAsync(body).then(() => announce(`Condition ${body.name} added.`))}
      />
      <EditStudyDialog open={editing} onClose={() => setEditing(false)} study={s} />
      <DeleteStudyDialog open={deleting} onClose={() => setDeleting(false)} studyId={s.id} studyName={s.name} onDeleted={() => navigate('/studies', { replace: true })} />
    </>
  );
}
