import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import { api } from '@/lib/api';
import { CalibrationDetail, type MeasureBleedRequest, type MeasureShiftRequest } from '@shared/schemas/instruments';
import { storeCalibration } from './useCalibration';

/** POST /api/calibrations/:id/measure-shift: measure the draft's shift on a stored bead field. */
export function useMeasureShift(calibrationId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: z.input<typeof MeasureShiftRequest>) => api(`/calibrations/${calibrationId}/measure-shift`, { method: 'POST', body, schema: CalibrationDetail }),
    onSuccess: (c) => storeCalibration(qc, c),
  });
}

/** POST /api/calibrations/:id/measure-bleed: measure a21 or a12 on stored single-label control fields. */
export function useMeasureBleed(calibrationId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: z.input<typeof MeasureBleedRequest>) => api(`/calibrations/${calibrationId}/measure-bleed`, { method: 'POST', body, schema: CalibrationDetail }),
    onSuccess: (c) => storeCalibration(qc, c),
  });
}
