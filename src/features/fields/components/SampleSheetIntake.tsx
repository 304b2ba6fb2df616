/**
 * Bulk intake by sample sheet: choose the sheet (CSV) and its files; the sheet is checked first (every bad row
 * listed with its line), then the conditions and coverslips it names are created and the files are sent
 * coverslip by coverslip with one overall progress bar. Files already stored are recognised by their SHA-256,
 * so starting again after a dropped connection sends only what is missing.
 */
import { useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { ErrorNotice } from '@/components/Caution';
import type { SampleSheetCheckRequest, SampleSheetCheckResponse } from '@shared/schemas/sample-sheet';
import { plural } from '@shared/format/plural';
import { useCheckSampleSheet } from '../api/useCheckSampleSheet';
import { useApplySampleSheet } from '../api/useApplySampleSheet';
import { fieldKeys } from '../api/keys';
import { sendFields } from '../lib/sendFields';
import { readText, sha256Hex } from '../lib/sha256';
import { formatBytes } from '../lib/inspect';

type Sending = { phase: 'sending'; loaded: number; total: number } | { phase: 'finished'; stored: number; refused: string[] };

export function SampleSheetIntake({ studyId }: { studyId: number }) {
  const [open, setOpen] = useState(false);
  const [sheet, setSheet] = useState<File | null>(null);
  const [files, setFiles] = useState<File[]>([]);
  const [request, setRequest] = useState<SampleSheetCheckRequest | null>(null);
  const [checked, setChecked] = useState<SampleSheetCheckResponse | null>(null);
  const [sending, setSending] = useState<Sending | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const check = useCheckSampleSheet(studyId);
  const apply = useApplySampleSheet(studyId);
  const qc = useQueryClient();

  const reset = () => {
    setChecked(null);
    setRequest(null);
    setSending(null);
    setProblem(null);
  };

  async function onCheck() {
    if (!sheet) return;
    reset();
    try {
      const hashed = await Promise.all(files.map(async (f) => ({ name: f.name, sha256: await sha256Hex(f) })));
      const body = { csv: await readText(sheet), files: hashed };
      setRequest(body);
      setChecked(await check.mutateAsync(body));
    } catch (e) {
      setProblem(e instanceof Error ? e.message : String(e)); // reading or hashing failed (a refused check shows check.error first)
    }
  }

  async function onSend() {
    if (!request) return;
    let plan;
    try {
      plan = await apply.mutateAsync(request);
    } catch {
      return; // shown by apply.error
    }
    const byName = new Map(files.map((f) => [f.name, f]));
    const missing = [...new Set(plan.uploads.flatMap((u) => u.files))].filter((n) => !byName.has(n));
    if (missing.length) {
      setProblem(`the sheet names ${plural(missing.length, 'file')} you did not choose: ${missing.slice(0, 5).join(', ')}`);
      return;
    }
    const sizes = plan.uploads.map((u) => u.files.reduce((a, n) => a + byName.get(n)!.size, 0));
    const total = sizes.reduce((a, b) => a + b, 0);
    let before = 0, stored = 0;
    const refused: string[] = [];
    setSending({ phase: 'sending', loaded: 0, total });
    for (const [i, u] of plan.uploads.entries()) {
      const out = await sendFields(u.coverslipId, u.files.map((n) => byName.get(n)!), u.plan, {
        progress: (loaded) => setSending({ phase: 'sending', loaded: before + loaded, total }),
      });
      before += sizes[i];
      for (const [k, r] of out.results.entries()) {
        if (r.ok) stored++;
        else refused.push(`line ${u.lines[k]}: ${r.error}`);
      }
      if (!out.ok && !out.results.length) {
        refused.push(`lines ${u.lines.join(', ')}: ${out.error}`);
        if (/connection was lost/.test(out.error ?? '')) break;
      }
    }
    setSending({ phase: 'finished', stored, refused });
    void qc.invalidateQueries({ queryKey: fieldKeys.all });
    void qc.invalidateQueries({ queryKey: ['studies'] });
  }

  const busy = check.isPending || apply.isPending || sending?.phase === 'sending';
  return (
    <>
      <Button onClick={() => setOpen(true)}>Add by sample sheet</Button>
      <Dialog
        open={open}
        onClose={() => !busy && setOpen(false)}
        title="Add fields by sample sheet"
        description="A CSV with one row per field: file (and file2 for a pair), condition, coverslip, and optionally ch1, ch2, name, pixel_size_um, z_step_um, instrument."
        width="lg"
        footer={
          <>
            <Button onClick={() => setOpen(false)} disabled={busy}>
              Close
            </Button>
            <Button onClick={() => void onCheck()} disabled={!sheet || busy} pending={check.isPending}>
              Check sheet
            </Button>
            <Button variant="primary" onClick={() => void onSend()} disabled={!checked?.ok || busy || sending?.phase === 'finished'} pending={apply.isPending}>
              Send files
            </Button>
          </>
        }
      >
        <div className="space-y-3">
          <label className="block text-sm">
            Sample sheet (CSV)
            <input
              type="file"
              accept=".csv,text/csv"
              className="mt-1 block"
              onChange={(e) => {
                setSheet(e.target.files?.[0] ?? null);
                reset();
              }}
            />
          </label>
          <label className="block text-sm">
            Image files
            <input
              type="file"
              multiple
              accept=".tif,.tiff"
              className="mt-1 block"
              onChange={(e) => {
                setFiles(Array.from(e.target.files ?? []));
                reset();
              }}
            />
          </label>
          <ErrorNotice error={check.error ?? apply.error ?? problem} />
          {checked && (
            <div role="status" className="text-sm">
              {checked.ok ? (
                <p>
                  {plural(checked.rows.length, 'row')} ready
                  {checked.uploaded.length > 0 && `, ${checked.uploaded.length} already uploaded`}
                  {checked.alreadyStored.length > 0 && `, ${plural(checked.alreadyStored.length, 'file')} already stored`}
                  {checked.creates.conditions.length > 0 && `; new conditions: ${checked.creates.conditions.join(', ')}`}
                  {checked.creates.coverslips.length > 0 && `; new coverslips: ${checked.creates.coverslips.join(', ')}`}.
                </p>
              ) : (
                <>
                  <p>{plural(checked.problems.length, 'row')} to correct before anything is stored:</p>
                  <ul className="list-disc pl-5">
                    {checked.problems.map((p) => (
                      <li key={p.line}>
                        Line {p.line}: {p.message}
                      </li>
                    ))}
                  </ul>
                </>
              )}
            </div>
          )}
          {sending?.phase === 'sending' && (
            <div>
              <progress className="w-full" max={sending.total || 1} value={sending.loaded} aria-label="Files sent" />
              <p className="text-sm">
                {formatBytes(sending.loaded)} of {formatBytes(sending.total)} sent
              </p>
            </div>
          )}
          {sending?.phase === 'finished' && (
            <div role="status" className="text-sm">
              <p>{plural(sending.stored, 'field')} stored.</p>
              {sending.refused.length > 0 && (
                <ul className="list-disc pl-5">
                  {sending.refused.map((r) => (
                    <li key={r}>{r}</li>
                  ))}
                </ul>
              )}
            </div>
          )}
        </div>
      </Dialog>
    </>
  );
}
