import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import { api } from '@/lib/api';
import { InstrumentDetail, type CreateInstrumentRequest } from '@shared/schemas/instruments';
import { instrumentKeys } from './keys';

/** POST /api/instruments: record an instrument (facility managers). */
export function useCreateInstrument() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: z.input<typeof CreateInstrumentRequest>) => api('/instruments', { body, schema: InstrumentDetail }),
    onSuccess: (i) => {
      qc.setQueryData(instrumentKeys.detail(i.id), i);
      void qc.invalidateQueries({ queryKey: instrumentKeys.list });
    },
  });
}
