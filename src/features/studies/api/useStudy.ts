import { queryOptions, useQuery, type QueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail } from '@shared/schemas/studies';
import { studiesQueryKey } from './useStudies';

export const studyQueryKey = (id: number) => ['studies', id] as const;

/** GET /api/studies/:studyId as query options (also used with useQueries, e.g. on Home). */
export const studyQueryOptions = (id: number) =>
  queryOptions({
    queryKey: studyQueryKey(id),
    queryFn: () => api(`/studies/${id}`, { schema: StudyDetail }),
    enabled: Number.isInteger(id) && id > 0,
  });

/** GET /api/studies/:studyId: the study with its conditions and coverslips. */
export function useStudy(id: number) {
  return useQuery(studyQueryOptions(id));
}

/** Every structure write answers with the whole StudyDetail: put it in the cache, refresh the list's counts. */
export function storeStudy(qc: QueryClient, study: StudyDetail) {
  qc.setQueryData(studyQueryKey(study.id), study);
  void qc.invalidateQueries({ queryKey: studiesQueryKey, exact: true });
}
