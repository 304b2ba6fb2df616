import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import { api } from '@/lib/api';
import { CalibrationDetail, type CreateCalibrationRequest } from '@shared/schemas/instruments';
import { storeCalibration } from './useCalibration';

/** POST /api/instruments/:id/calibrations: a new draft version (values start from the latest version unless given). */
export function useCreateCalibration(instrumentId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: z.input<typeof CreateCalibrationRequest>) => api(`/instruments/${instrumentId}/calibrations`, { body, schema: CalibrationDetail }),
    onSuccess: (c) => storeCalibration(qc, c),
  });
}
