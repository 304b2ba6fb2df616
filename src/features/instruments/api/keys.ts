/**
 * Query keys of the instruments endpoints, one per endpoint; everything lives under ['instruments'] so one
 * invalidation (`instrumentKeys.all`) refreshes all of them. Hooks and invalidations use these, never literal arrays.
 */
export const instrumentKeys = {
  all: ['instruments'] as const,
  /** GET /api/instruments */
  list: ['instruments', 'list'] as const,
  /** GET /api/instruments/:id */
  detail: (instrumentId: number) => ['instruments', instrumentId, 'detail'] as const,
  /** GET /api/calibrations/:id */
  calibration: (calibrationId: number) => ['instruments', 'calibration', calibrationId] as const,
};
