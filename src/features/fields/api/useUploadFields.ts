import { useCallback, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import type { UploadFieldPlan, UploadResult } from '@shared/schemas/fields';
import { sendFields } from '../lib/sendFields';
import { fieldKeys } from './keys';

export interface UploadProgress {
  loaded: number;
  total: number;
}

export type UploadState =
  | { phase: 'idle' }
  | { phase: 'uploading'; progress: UploadProgress }
  | { phase: 'processing' }
  | { phase: 'done'; results: UploadResult[] }
  | { phase: 'failed'; error: string; results: UploadResult[] };

/**
 * POST /api/coverslips/:id/fields (multipart: parts "files" + "plan", sent by lib/sendFields so the upload
 * progress can be shown); answers with one result per planned field.
 */
export function useUploadFields(coverslipId: number) {
  const qc = useQueryClient();
  const [state, setState] = useState<UploadState>({ phase: 'idle' });
  const xhrRef = useRef<XMLHttpRequest | null>(null);

  const upload = useCallback(
    async (files: File[], plan: UploadFieldPlan[]) => {
      setState({ phase: 'uploading', progress: { loaded: 0, total: files.reduce((a, f) => a + f.size, 0) } });
      const out = await sendFields(coverslipId, files, plan, {
        started: (xhr) => (xhrRef.current = xhr),
        progress: (loaded, total) => setState({ phase: 'uploading', progress: { loaded, total } }),
        sent: () => setState({ phase: 'processing' }),
      });
      xhrRef.current = null;
      setState(out.ok ? { phase: 'done', results: out.results } : { phase: 'failed', error: out.error!, results: out.results });
      void qc.invalidateQueries({ queryKey: fieldKeys.all });
      void qc.invalidateQueries({ queryKey: ['studies'] });
      return out.results;
    },
    [coverslipId, qc],
  );

  const cancel = useCallback(() => xhrRef.current?.abort(), []);
  const reset = useCallback(() => setState({ phase: 'idle' }), []);
  return { state, upload, cancel, reset };
}
