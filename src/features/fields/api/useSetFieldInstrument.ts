import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldSummary } from '@shared/schemas/fields';
import { fieldKeys } from './keys';

/** PUT /api/fields/:id/instrument: which instrument recorded the field (null: none); its approved calibration is what recipes apply. */
export function useSetFieldInstrument(fieldId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (instrumentId: number | null) => api(`/fields/${fieldId}/instrument`, { method: 'PUT', body: { instrumentId }, schema: FieldSummary }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: fieldKeys.all }),
  });
}
