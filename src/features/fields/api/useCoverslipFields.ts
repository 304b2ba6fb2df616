import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { CoverslipFieldsResponse } from '@shared/schemas/fields';

import { fieldKeys } from './keys';

/** GET /api/coverslips/:id/fields — the coverslip's fields (deleted ones left out). */
export function useCoverslipFields(coverslipId: number) {
  return useQuery({
    queryKey: fieldKeys.coverslip(coverslipId),
    queryFn: ({ signal }) => api(`/coverslips/${coverslipId}/fields`, { schema: CoverslipFieldsResponse, signal }),
    enabled: Number.isInteger(coverslipId) && coverslipId > 0,
  });
}
