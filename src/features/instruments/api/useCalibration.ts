import { useQuery, type QueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { CalibrationDetail } from '@shared/schemas/instruments';
import { instrumentKeys } from './keys';

/** GET /api/calibrations/:id: one version's values, history and what the user may do with it. */
export function useCalibration(calibrationId: number | null) {
  return useQuery({
    queryKey: instrumentKeys.calibration(calibrationId ?? 0),
    enabled: calibrationId != null && calibrationId > 0,
    queryFn: ({ signal }) => api(`/calibrations/${calibrationId}`, { schema: CalibrationDetail, signal }),
  });
}

/** After a change: store the fresh version and refresh its instrument and the list (the approved one may have changed). */
export function storeCalibration(qc: QueryClient, c: CalibrationDetail) {
  qc.setQueryData(instrumentKeys.calibration(c.id), c);
  void qc.invalidateQueries({ queryKey: instrumentKeys.detail(c.instrumentId) });
  void qc.invalidateQueries({ queryKey: instrumentKeys.list });
}
