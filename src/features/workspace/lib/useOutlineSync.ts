/**
 * The save loop: after each change (and not during a drag) the document's differences from the server are
 * sent as create / update / delete calls, one at a time; each answer goes back into the reducer. A call the
 * server refuses is not retried until that outline changes again; its message is shown.
 */
import { useEffect, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { planSave, type OutlineAction, type OutlineState, type SaveOp } from './outlineState';
import { createCell } from '../api/useCreateCell';
import { updateCell } from '../api/useUpdateCell';
import { deleteCell } from '../api/useDeleteCell';
import { cellsQueryKey } from '../api/useCells';

export type SaveStatus = { kind: 'idle' | 'saving' | 'saved' } | { kind: 'error'; message: string };

const sig = (op: SaveOp) => JSON.stringify(op);

export function useOutlineSync(fieldId: number, state: OutlineState, dispatch: (a: OutlineAction) => void, paused: boolean, enabled: boolean) {
  const qc = useQueryClient();
  const busy = useRef(false);
  const failed = useRef(new Map<string, string>());
  const [status, setStatus] = useState<SaveStatus>({ kind: 'idle' });
  const [tick, setTick] = useState(0);
  const ops = planSave(state).filter((op) => failed.current.get(op.key) !== sig(op));
  const pending = new Set(planSave(state).map((o) => o.key));

  useEffect(() => {
    if (!enabled || paused || busy.current || ops.length === 0) return;
    const t = setTimeout(async () => {
      busy.current = true;
      setStatus({ kind: 'saving' });
      let error: string | null = null;
      for (const op of ops) {
        try {
          if (op.op === 'create') dispatch({ type: 'saved', key: op.key, cell: await createCell(fieldId, op.body) });
          else if (op.op === 'update') dispatch({ type: 'saved', key: op.key, cell: await updateCell(op.id, op.body) });
          else {
            await deleteCell(op.id).catch((e: { status?: number }) => {
              if (e?.status !== 404) throw e; // already gone
            });
            dispatch({ type: 'saved', key: op.key, cell: null });
          }
          failed.current.delete(op.key);
        } catch (e) {
          failed.current.set(op.key, sig(op));
          error = (e as Error).message;
        }
      }
      busy.current = false;
      setStatus(error ? { kind: 'error', message: error } : { kind: 'saved' });
      await qc.invalidateQueries({ queryKey: cellsQueryKey(fieldId) });
      setTick((x) => x + 1);
    }, 350);
    return () => clearTimeout(t);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [state.outlines, state.saved, paused, enabled, tick, fieldId]);

  return { status, pending, busy: busy.current || ops.length > 0 };
}
