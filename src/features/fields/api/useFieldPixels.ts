import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { ApiError } from '@/lib/api';
import { decodePixels, PixelCodecError, type PixelPlanes } from '@shared/pixels/codec';
import { fieldKeys } from './keys';

export interface FieldPixels extends PixelPlanes {
  /** which z was used, in words (header x-syntopy-z) */
  zLabel: string;
}

/**
 * Fetches and decodes GET /api/fields/:id/pixels?z= (format: shared/pixels/codec.ts). A message that does not
 * follow the format is an error (status 422, not retried) that the workspace shows; it is never guessed at.
 */
export async function fetchFieldPixels(fieldId: number, z: number | 'mip' | undefined, signal?: AbortSignal): Promise<FieldPixels> {
  return fetchPixels(`/api/fields/${fieldId}/pixels${z === undefined ? '' : `?z=${z}`}`, signal);
}

/**
 * One orthogonal section through every slice (`axis` 'xz' at row `at`, 'yz' at column `at`): `across` × slices
 * samples per channel, row k = slice k. A section of a 1024 × 1024 × 32 16-bit stack is 128 kB, where the
 * whole stack would be 128 MB.
 */
export async function fetchFieldSection(fieldId: number, axis: 'xz' | 'yz', at: number, signal?: AbortSignal): Promise<FieldPixels> {
  return fetchPixels(`/api/fields/${fieldId}/pixels?section=${axis}&at=${at}`, signal);
}

async function fetchPixels(url: string, signal?: AbortSignal): Promise<FieldPixels> {
  const res = await fetch(url, { credentials: 'same-origin', signal });
  if (!res.ok) {
    const isJson = (res.headers.get('content-type') ?? '').includes('json');
    const body = isJson ? ((await res.json()) as { error?: string }) : {};
    throw new ApiError(res.status, body.error ?? `could not load the pixels (${res.status})`);
  }
  const message = await res.arrayBuffer();
  let planes: PixelPlanes;
  try {
    planes = decodePixels(message);
  } catch (e) {
    if (e instanceof PixelCodecError) throw new ApiError(422, `The pixels of this field could not be read: ${e.message}`);
    throw e;
  }
  if (planes.depth !== 1) throw new ApiError(422, `The pixels of this field could not be read: expected one plane per channel, got ${planes.depth}`);
  return { ...planes, zLabel: res.headers.get('x-syntopy-z') ?? '' };
}

/** Both channels of one slice (or the projection) as typed arrays, for the pixel scatter and live preview. */
export function useFieldPixels(fieldId: number, z: number | 'mip' | undefined, enabled = true) {
  return useQuery({
    queryKey: fieldKeys.pixels(fieldId, z),
    queryFn: ({ signal }) => fetchFieldPixels(fieldId, z, signal),
    enabled: enabled && Number.isInteger(fieldId) && fieldId > 0,
    staleTime: Infinity,
    gcTime: 60_000,
  });
}

/** An orthogonal section of a stack (see fetchFieldSection), for the workspace's XZ and YZ views. */
export function useFieldSection(fieldId: number, axis: 'xz' | 'yz', at: number, enabled = true) {
  return useQuery({
    queryKey: fieldKeys.section(fieldId, axis, at),
    queryFn: ({ signal }) => fetchFieldSection(fieldId, axis, at, signal),
    enabled: enabled && Number.isInteger(fieldId) && fieldId > 0 && Number.isInteger(at) && at >= 0,
    staleTime: Infinity,
    gcTime: 30_000,
    // keep the last section on screen while the next one loads (the point moves with the cursor)
    placeholderData: keepPreviousData,
  });
}
