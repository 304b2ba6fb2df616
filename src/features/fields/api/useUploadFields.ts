import { useCallback, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { UploadResponse, type UploadFieldPlan, type UploadResult } from '@shared/schemas/fields';
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
 * POST /api/coverslips/:id/fields (multipart: parts "files" + "plan") through XMLHttpRequest so the upload
 * progress can be shown; answers with one result per planned field.
 */
export function useUploadFields(coverslipId: number) {
  const qc = useQueryClient();
  const [state, setState] = useState<UploadState>({ phase: 'idle' });
  const xhrRef = useRef<XMLHttpRequest | null>(null);

  const upload = useCallback(
    (files: File[], plan: UploadFieldPlan[]) =>
      new Promise<UploadResult[]>((resolve) => {
        const form = new FormData();
        form.append('plan', JSON.stringify(plan));
        for (const f of files) form.append('files', f, f.name);
        const xhr = new XMLHttpRequest();
        xhrRef.current = xhr;
        xhr.open('POST', `/api/coverslips/${coverslipId}/fields`);
        xhr.withCredentials = true;
        xhr.responseType = 'text';
        setState({ phase: 'uploading', progress: { loaded: 0, total: files.reduce((a, f) => a + f.size, 0) } });
        xhr.upload.onprogress = (e) => {
          if (e.lengthComputable) setState({ phase: 'uploading', progress: { loaded: e.loaded, total: e.total } });
        };
        xhr.upload.onload = () => setState({ phase: 'processing' });
        const finish = (s: UploadState, results: UploadResult[]) => {
          xhrRef.current = null;
          setState(s);
          void qc.invalidateQueries({ queryKey: fieldKeys.all });
          void qc.invalidateQueries({ queryKey: ['studies'] });
          resolve(results);
        };
        xhr.onload = () => {
          let body: unknown = null;
          try {
            body = JSON.parse(xhr.responseText);
          } catch {
            /* not JSON */
          }
          const parsed = UploadResponse.safeParse(body);
          const results = parsed.success ? parsed.data.results : [];
          if (xhr.status >= 200 && xhr.status < 300) finish({ phase: 'done', results }, results);
          else {
            const msg = (body as { error?: string } | null)?.error ?? `the upload failed (${xhr.status})`;
            finish({ phase: 'failed', error: msg, results }, results);
          }
        };
        xhr.onerror = () => finish({ phase: 'failed', error: 'the connection was lost during the upload; nothing was stored from the unfinished files', results: [] }, []);
        xhr.onabort = () => finish({ phase: 'failed', error: 'upload cancelled; nothing was stored from the unfinished files', results: [] }, []);
        xhr.send(form);
      }),
    [coverslipId, qc],
  );

  const cancel = useCallback(() => xhrRef.current?.abort(), []);
  const reset = useCallback(() => setState({ phase: 'idle' }), []);
  return { state, upload, cancel, reset };
}
