import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { InstrumentDetail } from '@shared/schemas/instruments';
import { instrumentKeys } from './keys';

/** GET /api/instruments/:id: the instrument and all its calibration versions, newest first. */
export function useInstrument(instrumentId: number) {
  return useQuery({
    queryKey: instrumentKeys.detail(instrumentId),
    enabled: Number.isInteger(instrumentId) && instrumentId > 0,
    queryFn: ({ signal }) => api(`/instruments/${instrumentId}`, { schema: InstrumentDetail, signal }),
  });
}
