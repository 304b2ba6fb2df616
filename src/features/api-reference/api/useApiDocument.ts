import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ApiDocument } from '@shared/schemas/api-reference';

export const apiDocumentQueryKey = ['api-reference'] as const;

/** GET /api/openapi.json: the API as an OpenAPI 3.1 document (it changes only with the server's code). */
export function useApiDocument() {
  return useQuery({
    queryKey: apiDocumentQueryKey,
    queryFn: () => api('/openapi.json', { schema: ApiDocument }),
    staleTime: Infinity,
  });
}
