/** Freeze the study's current comparison into a report: title, notes, the coefficients to show. */
import { useState } from 'react';
import { useNavigate } from 'react-router';
import { Button, ErrorNotice, FormDialog, TextArea, TextField } from '@/components';
import { ApiError } from '@/lib/api';
import { labelOf, REPORT_DEFAULT_KEYS } from '@shared/coefficients';
import { CreateReportRequest, REPORT_COEFFICIENTS, type ReportCoefficient } from '@shared/schemas/reports';
import { validate, type FieldErrors } from '@/lib/form';
import { useCreateReport } from '../api/useCreateReport';

const DEFAULT = REPORT_DEFAULT_KEYS as ReportCoefficient[];

export function CreateReportDialog({ studyId, open, onClose, initialCoefficients, recipeId, runId }: { studyId: number; open: boolean; onClose: () => void; initialCoefficients?: ReportCoefficient[]; recipeId?: number; runId?: number }) {
  const [title, setTitle] = useState('');
  const [notes, setNotes] = useState('');
  const [coefs, setCoefs] = useState<ReportCoefficient[]>(initialCoefficients ?? DEFAULT);
  const create = useCreateReport(studyId);
  const navigate = useNavigate();
  const [local, setLocal] = useState<FieldErrors>({});
  const err = create.error instanceof ApiError ? create.error : null;
  const fieldError = (path: string) => local[path] ?? err?.fieldError(path);
  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const body = { title, notes, coefficients: REPORT_COEFFICIENTS.filter((k) => coefs.includes(k)), ...(recipeId ? { recipeId } : {}), ...(runId ? { runId } : {}) };
    // the shared schema's messages beside the fields, before anything is sent
    const v = validate(CreateReportRequest, body);
    setLocal(v.ok ? {} : v.errors);
    if (!v.ok) return;
    create.mutate(
      body,
      { onSuccess: (r) => navigate(`/reports/${r.id}`) },
    );
  };
  return (
    <FormDialog
      open={open}
      onClose={onClose}
      title="New report"
      description="A report freezes today's numbers, plots, recipe versions and exclusions. Later runs or exclusions do not change it; make a newer report to show them."
      submitLabel="Freeze report"
      pending={create.isPending}
      onSubmit={submit} noValidate
    >
      <TextField label="Title" value={title} onChange={(e) => setTitle(e.target.value)} required maxLength={200} error={fieldError('title')} data-autofocus />
      <TextArea label="Notes" hint="Shown under the title (optional)." value={notes} onChange={(e) => setNotes(e.target.value)} rows={3} maxLength={10000} />
      <fieldset>
        <legend className="text-sm font-medium">Coefficients</legend>
        <div className="mt-1 grid grid-cols-2 gap-1">
          {REPORT_COEFFICIENTS.map((k) => (
            <label key={k} className="flex items-center gap-2 text-sm">
              <input type="checkbox" checked={coefs.includes(k)} onChange={(e) => setCoefs(e.target.checked ? [...coefs, k] : coefs.filter((x) => x !== k))} />
              {labelOf(k)}
            </label>
          ))}
        </div>
        {fieldError('coefficients') && <p className="mt-1 text-xs font-medium text-danger">{fieldError('coefficients')}</p>}
      </fieldset>
      {create.error && !err?.issues.length && <ErrorNotice error={create.error} />}
      {create.isPending && (
        <p role="status" className="text-sm text-ink-soft">
          Freezing the report: the comparison, figures and methods are computed now; this takes a few seconds.
        </p>
      )}
    </FormDialog>
  );
}

/** A button that opens the dialog (the Compare screen may place it too). */
export function CreateReportButton(props: { studyId: number; initialCoefficients?: ReportCoefficient[]; recipeId?: number; runId?: number; label?: string }) {
  const [open, setOpen] = useState(false);
  return (
    <>
      <Button variant="primary" onClick={() => setOpen(true)}>
        {props.label ?? 'New report'}
      </Button>
      {open && <CreateReportDialog {...props} open onClose={() => setOpen(false)} />}
    </>
  );
}
