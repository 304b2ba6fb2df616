import { useQuery } from '@tanstack/react-query';
import { ApiError } from '@/lib/api';

export const fieldPixelsQueryKey = (fieldId: number, z?: number | 'mip') => ['fields', fieldId, 'pixels', z ?? null] as const;

export interface FieldPixelsData {
  width: number;
  height: number;
  bitDepth: number;
  format: 'uint' | 'float';
  ch1: Uint16Array | Float32Array;
  ch2: Uint16Array | Float32Array;
  /** which z was used, in words */
  zLabel: string;
}

/** Parses the GET /api/fields/:id/pixels body (ch1 then ch2, little-endian) and its x-syntopy-shape header. */
export function parseFieldPixels(buf: ArrayBuffer, shape: string, zLabel = ''): FieldPixelsData {
  const [w, h, bits, format] = shape.split(',');
  const width = Number(w);
  const height = Number(h);
  const n = width * height;
  const f = format === 'float' ? 'float' : 'uint';
  const all = f === 'float' ? new Float32Array(buf) : new Uint16Array(buf);
  if (all.length !== 2 * n) throw new Error(`pixel data has ${all.length} values, expected ${2 * n}`);
  return { width, height, bitDepth: Number(bits), format: f, ch1: all.subarray(0, n), ch2: all.subarray(n), zLabel };
}

/** GET /api/fields/:id/pixels?z= — both channels as typed arrays, for the pixel scatter. */
export function useFieldPixels(fieldId: number, z?: number | 'mip', enabled = true) {
  return useQuery({
    queryKey: fieldPixelsQueryKey(fieldId, z),
    queryFn: async ({ signal }) => {
      const res = await fetch(`/api/fields/${fieldId}/pixels${z !== undefined ? `?z=${z}` : ''}`, { credentials: 'same-origin', signal });
      if (!res.ok) {
        const body = (await res.json().catch(() => ({}))) as { error?: string };
        throw new ApiError(res.status, body.error ?? `request failed (${res.status})`);
      }
      return parseFieldPixels(await res.arrayBuffer(), res.headers.get('x-syntopy-shape') ?? '', res.headers.get('x-syntopy-z') ?? '');
    },
    enabled: enabled && Number.isInteger(fieldId) && fieldId > 0,
    staleTime: Infinity,
    gcTime: 60_000,
  });
}
