/**
 * One multipart upload to POST /api/coverslips/:id/fields (parts "plan" and "files") through XMLHttpRequest,
 * so the bytes sent can be shown; resolves with the HTTP status, the per-field results and the error message
 * of a refused upload. Used by the one-coverslip upload dialog and by sample-sheet intake.
 */
import { UploadResponse, type UploadFieldPlan, type UploadResult } from '@shared/schemas/fields';

export interface SendOutcome {
  ok: boolean;
  results: UploadResult[];
  error: string | null;
}

export function sendFields(
  coverslipId: number,
  files: File[],
  plan: UploadFieldPlan[],
  on: { progress?: (loaded: number, total: number) => void; sent?: () => void; started?: (xhr: XMLHttpRequest) => void } = {},
): Promise<SendOutcome> {
  return new Promise((resolve) => {
    const form = new FormData();
    form.append('plan', JSON.stringify(plan));
    for (const f of files) form.append('files', f, f.name);
    const xhr = new XMLHttpRequest();
    on.started?.(xhr);
    xhr.open('POST', `/api/coverslips/${coverslipId}/fields`);
    xhr.withCredentials = true;
    xhr.responseType = 'text';
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable) on.progress?.(e.loaded, e.total);
    };
    xhr.upload.onload = () => on.sent?.();
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = JSON.parse(xhr.responseText);
      } catch {
        /* not JSON */
      }
      const parsed = UploadResponse.safeParse(body);
      const results = parsed.success ? parsed.data.results : [];
      if (xhr.status >= 200 && xhr.status < 300) resolve({ ok: true, results, error: null });
      else resolve({ ok: false, results, error: (body as { error?: string } | null)?.error ?? `the upload failed (${xhr.status})` });
    };
    xhr.onerror = () => resolve({ ok: false, results: [], error: 'the connection was lost during the upload; nothing was stored from the unfinished files' });
    xhr.onabort = () => resolve({ ok: false, results: [], error: 'upload cancelled; nothing was stored from the unfinished files' });
    xhr.send(form);
  });
}
