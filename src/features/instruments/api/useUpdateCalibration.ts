import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import { api } from '@/lib/api';
import { CalibrationDetail, type UpdateCalibrationRequest } from '@shared/schemas/instruments';
import { storeCalibration } from './useCalibration';

/** PATCH /api/calibrations/:id: edit a draft or returned version. */
export function useUpdateCalibration(calibrationId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: z.input<typeof UpdateCalibrationRequest>) => api(`/calibrations/${calibrationId}`, { method: 'PATCH', body, schema: CalibrationDetail }),
    onSuccess: (c) => storeCalibration(qc, c),
  });
}
