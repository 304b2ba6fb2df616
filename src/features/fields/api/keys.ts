/**
 * Query keys of the fields endpoints, one per endpoint; everything lives under ['fields'] so one invalidation
 * (`fieldKeys.all`) refreshes all of them. Hooks and invalidations use these, never literal arrays.
 */
export const fieldKeys = {
  all: ['fields'] as const,
  /** GET /api/coverslips/:id/fields */
  coverslip: (coverslipId: number) => ['fields', 'coverslip', coverslipId] as const,
  /** GET /api/studies/:studyId/fields */
  study: (studyId: number) => ['fields', 'study', studyId] as const,
  /** GET /api/fields/:id */
  detail: (fieldId: number) => ['fields', fieldId, 'detail'] as const,
  /** GET /api/fields/:id/pixels?z= (undefined z = the server's default slice) */
  pixels: (fieldId: number, z: number | 'mip' | undefined) => ['fields', fieldId, 'pixels', z ?? 'default'] as const,
  /** GET /api/fields/:id/pixels?section=&at= (an orthogonal section through every slice) */
  section: (fieldId: number, axis: 'xz' | 'yz', at: number) => ['fields', fieldId, 'section', axis, at] as const,
};

