import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { CalibrationDetail } from '@shared/schemas/instruments';
import { storeCalibration } from './useCalibration';

export type CalibrationTransition = 'submit' | 'approve' | 'return' | 'retire';

/** POST /api/calibrations/:id/{submit|approve|return|retire} with an optional note (required to return). */
export function useCalibrationTransition() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, action, note }: { id: number; action: CalibrationTransition; note?: string }) =>
      api(`/calibrations/${id}/${action}`, { body: note ? { note } : {}, schema: CalibrationDetail }),
    onSuccess: (c) => storeCalibration(qc, c),
  });
}
