/** URL of GET /api/fields/:id/preview.png (a plain image URL, so no hook: <img src> loads it). */
export function fieldPreviewUrl(
  fieldId: number,
  opts: { view?: 'composite' | 'ch1' | 'ch2'; max?: number; z?: number | 'mip'; lo1?: number; hi1?: number; lo2?: number; hi2?: number } = {},
) {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(opts)) if (v !== undefined) q.set(k, String(v));
  const s = q.toString();
  return `/api/fields/${fieldId}/preview.png${s ? `?${s}` : ''}`;
}
