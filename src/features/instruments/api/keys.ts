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
  /** GET /api/studies, for choosing the fields a calibration is measured from */
  pickStudies: ['instruments', 'pick', 'studies'] as const,
  /** GET /api/studies/:id/fields, likewise */
  pickFields: (studyId: number) => ['instruments', 'pick', 'fields', studyId] as const,
  /** GET /api/fields/:id/shift?maxShift= (measured on demand, kept while the page lives) */
  fieldShift: (fieldId: number, maxShift: number) => ['instruments', 'field-shift', fieldId, maxShift] as const,
};
