import { useQuery } from '@tanstack/react-query';
import { ApiError } from '@/lib/api';

export interface FieldPixelData {
  width: number;
  height: number;
  bitDepth: number;
  format: 'uint16' | 'float32';
  /** ch1 then ch2, each width × height */
  data: Uint16Array | Float32Array;
  zLabel: string;
}

export const fieldPixelsQueryKey = (fieldId: number, z: number | 'mip' | undefined) => ['fields', fieldId, 'pixels', z ?? 'default'] as const;

/** GET /api/fields/:id/pixels?z= — both channels as little-endian binary (header x-syntopy-shape). */
export async function fetchFieldPixels(fieldId: number, z: number | 'mip' | undefined, signal?: AbortSignal): Promise<FieldPixelData> {
  const res = await fetch(`/api/fields/${fieldId}/pixels${z === undefined ? '' : `?z=${z}`}`, { credentials: 'same-origin', signal });
  if (!res.ok) {
    let msg = `could not load the pixels (${res.status})`;
    try {
      msg = ((await res.json()) as { error?: string }).error ?? msg;
    } catch {
      /* not JSON */
    }
    throw new ApiError(res.status, msg);
  }
  const shape = (res.headers.get('x-syntopy-shape') ?? '').split(',');
  const [width, height, bitDepth] = shape.slice(0, 3).map(Number);
  const format = shape[3] === 'float32' ? 'float32' : 'uint16';
  const buf = await res.arrayBuffer();
  const data = format === 'float32' ? new Float32Array(buf) : new Uint16Array(buf);
  if (!(width > 0 && height > 0) || data.length !== 2 * width * height) throw new ApiError(500, `pixel data does not match its shape header ${JSON.stringify(shape.join(','))}`);
  return { width, height, bitDepth, format, data, zLabel: res.headers.get('x-syntopy-z') ?? '' };
}

export function useFieldPixels(fieldId: number, z: number | 'mip' | undefined) {
  return useQuery({ queryKey: fieldPixelsQueryKey(fieldId, z), queryFn: ({ signal }) => fetchFieldPixels(fieldId, z, signal), staleTime: Infinity, gcTime: 60_000 });
}
