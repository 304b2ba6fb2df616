/** One condition: its name, order and delete controls, and its coverslips with their fields. */
import { useState } from 'react';
import { UpdateConditionRequest, type Condition, type Coverslip, type StudyDetail } from '@shared/schemas/studies';
import { Badge } from '@/components/Badge';
import { Button } from '@/components/Button';
import { ConfirmDialog } from '@/components/Dialog';
import { EmptyState } from '@/components/EmptyState';
import { useUpdateCondition } from '../api/useUpdateCondition';
import { useDeleteCondition } from '../api/useDeleteCondition';
import { useCreateCoverslip } from '../api/useCreateCoverslip';
import { useUpdateCoverslip } from '../api/useUpdateCoverslip';
import { useDeleteCoverslip } from '../api/useDeleteCoverslip';
import { useReorder } from '../api/useReorder';
import { NameDialog } from './NameDialog';
import { CoverslipDialog } from './CoverslipDialog';
import { MoveButtons, moved, refocusMove } from './MoveButtons';
import { FieldsSlot } from './FieldsSlot';

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

export function ConditionCard({
  study,
  condition,
  index,
  onMove,
  announce,
}: {
  study: StudyDetail;
  condition: Condition;
  index: number;
  onMove: (dir: -1 | 1) => void;
  announce: (message: string) => void;
}) {
  const canEdit = study.permissions.includes('edit_structure');
  const canUpload = study.permissions.includes('edit_images');
  const canAddCoverslip = study.permissions.includes('add_coverslips');
  const rename = useUpdateCondition();
  const remove = useDeleteCondition();
  const addCoverslip = useCreateCoverslip();
  const editCoverslip = useUpdateCoverslip();
  const removeCoverslip = useDeleteCoverslip();
  const reorder = useReorder(study.id);
  const [renaming, setRenaming] = useState(false);
  const [deleting, setDeleting] = useState(false);
  const [adding, setAdding] = useState(false);
  const [editing, setEditing] = useState<Coverslip | null>(null);
  const [deletingCs, setDeletingCs] = useState<Coverslip | null>(null);
  const headingId = `condition-${condition.id}-name`;
  const fieldTotal = condition.coverslips.reduce((a, c) => a + c.fieldCount, 0);

  const moveCoverslip = (i: number, dir: -1 | 1) => {
    const ids = moved(
      condition.coverslips.map((c) => c.id),
      i,
      dir,
    );
    const cs = condition.coverslips[i];
    reorder.mutate(
      { coverslips: [{ conditionId: condition.id, coverslipIds: ids }] },
      {
        onSuccess: () => {
          announce(`${cs.name} moved to position ${i + dir + 1} of ${ids.length} in ${condition.name}.`);
          refocusMove(`move-coverslip-${cs.id}`, dir);
        },
        onError: (e) => announce(`Could not move ${cs.name}: ${e.message}`),
      },
    );
  };

  return (
    <section aria-labelledby={headingId} className="rounded-lg border border-ink/10 bg-white">
      <header className="flex flex-wrap items-center gap-2 border-b border-ink/10 px-4 py-3">
        <span className="h-6 w-1 rounded-full bg-accent" aria-hidden="true" />
        <h2 id={headingId} className="text-base font-semibold">
          {condition.name}
        </h2>
        <span className="text-xs text-ink-soft">
          {plural(condition.coverslips.length, 'coverslip')} · {plural(fieldTotal, 'field')}
        </span>
        {canEdit && (
          <span className="ml-auto flex flex-wrap items-center gap-1">
            <MoveButtons idPrefix={`move-condition-${condition.id}`} what={`condition ${condition.name}`} index={index} count={study.conditions.length} onMove={onMove} />
            <Button size="sm" variant="ghost" onClick={() => setRenaming(true)} aria-label={`Rename condition ${condition.name}`}>
              Rename
            </Button>
            <Button size="sm" variant="quietDanger" onClick={() => setDeleting(true)} aria-label={`Delete condition ${condition.name}`}>
              Delete
            </Button>
          </span>
        )}
      </header>

      <div className="px-4 py-3">
        {condition.coverslips.length === 0 ? (
          <EmptyState title="No coverslips in this condition" className="py-5">
            {canAddCoverslip ? 'Each coverslip is one biological replicate. Add the first.' : 'The study owner or the lab’s microscopists add coverslips.'}
          </EmptyState>
        ) : (
          <ol className="flex flex-col divide-y divide-ink/10" aria-label={`Coverslips of ${condition.name}`}>
            {condition.coverslips.map((cs, i) => (
              <li key={cs.id} className="py-3" aria-label={cs.name}>
                <div className="flex flex-wrap items-center gap-2">
                  <span className="font-medium">{cs.name}</span>
                  <Badge>replicate {cs.replicate}</Badge>
                  {cs.preparedOn && <span className="text-xs text-ink-soft">prepared {cs.preparedOn}</span>}
                  <span className="text-xs text-ink-soft">
                    {plural(cs.fieldCount, 'field')} · {plural(cs.cellCount, 'cell')}
                  </span>
                  {cs.fieldCount > 0 && cs.cellCount === 0 && <Badge tone="warn">no cells outlined</Badge>}
                  {canEdit && (
                    <span className="ml-auto flex flex-wrap items-center gap-1">
                      <MoveButtons
                        idPrefix={`move-coverslip-${cs.id}`}
                        what={`coverslip ${cs.name}`}
                        index={i}
                        count={condition.coverslips.length}
                        onMove={(dir) => moveCoverslip(i, dir)}
                        disabled={reorder.isPending}
                      />
                      <Button size="sm" variant="ghost" onClick={() => setEditing(cs)} aria-label={`Edit coverslip ${cs.name}`}>
                        Edit
                      </Button>
                      <Button size="sm" variant="quietDanger" onClick={() => setDeletingCs(cs)} aria-label={`Delete coverslip ${cs.name}`}>
                        Delete
                      </Button>
                    </span>
                  )}
                </div>
                {cs.notes && <p className="mt-1 whitespace-pre-line text-sm text-ink-soft">{cs.notes}</p>}
                <FieldsSlot coverslipId={cs.id} studyId={study.id} canUpload={canUpload} defaultInstrumentId={study.defaultInstrument?.id ?? null} />
              </li>
            ))}
          </ol>
        )}
        {canAddCoverslip && (
          <div className="mt-3">
            <Button size="sm" onClick={() => setAdding(true)}>
              Add coverslip
            </Button>
          </div>
        )}
      </div>

      <NameDialog
        open={renaming}
        onClose={() => setRenaming(false)}
        title="Rename condition"
        label="Condition name"
        initial={condition.name}
        submitLabel="Rename"
        schema={UpdateConditionRequest}
        save={(body) => rename.mutateAsync({ id: condition.id, ...body })}
      />
      <ConfirmDialog
        open={deleting}
        onClose={() => setDeleting(false)}
        title={`Delete condition “${condition.name}”?`}
        message={
          <>
            This also deletes its {plural(condition.coverslips.length, 'coverslip')} and {plural(fieldTotal, 'field')}, with their cells and measurements. It cannot be
            undone.
          </>
        }
        confirmLabel="Delete condition"
        onConfirm={() => remove.mutateAsync(condition.id).then(() => announce(`Condition ${condition.name} deleted.`))}
      />
      <CoverslipDialog open={adding} onClose={() => setAdding(false)} conditionName={condition.name} save={(body) => addCoverslip.mutateAsync({ conditionId: condition.id, ...body })} />
      <CoverslipDialog
        open={editing !== null}
        onClose={() => setEditing(null)}
        coverslip={editing ?? undefined}
        conditionName={condition.name}
        save={(body) => editCoverslip.mutateAsync({ id: editing!.id, ...body })}
      />
      <ConfirmDialog
        open={deletingCs !== null}
        onClose={() => setDeletingCs(null)}
        title={`Delete coverslip “${deletingCs?.name ?? ''}”?`}
        message={<>This also deletes its {plural(deletingCs?.fieldCount ?? 0, 'field')}, with their cells and measurements. It cannot be undone.</>}
        confirmLabel="Delete coverslip"
        onConfirm={() => {
          const cs = deletingCs!;
          return removeCoverslip.mutateAsync(cs.id).then(() => announce(`Coverslip ${cs.name} deleted.`));
        }}
      />
    </section>
  );
}
