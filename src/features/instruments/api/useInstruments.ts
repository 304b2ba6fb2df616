import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { InstrumentListResponse } from '@shared/schemas/instruments';
import { instrumentKeys } from './keys';

/** GET /api/instruments: every instrument with its approved calibration (anyone but collaborators). */
export function useInstruments(enabled = true) {
  return useQuery({
    queryKey: instrumentKeys.list,
    enabled,
    queryFn: async ({ signal }) => (await api('/instruments', { schema: InstrumentListResponse, signal })).instruments,
  });
}
