import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { CoverslipFieldsResponse } from '@shared/schemas/fields';

export const coverslipFieldsQueryKey = (coverslipId: number) => ['fields', 'coverslip', coverslipId] as const;

/** GET /api/coverslips/:id/fields — the coverslip's fields (deleted ones left out). */
export function useCoverslipFields(coverslipId: number) {
  return useQuery({
    queryKey: coverslipFieldsQueryKey(coverslipId),
    queryFn: ({ signal }) => api(`/coverslips/${coverslipId}/fields`, { schema: CoverslipFieldsResponse, signal }),
    enabled: Number.isInteger(coverslipId) && coverslipId > 0,
  });
}
