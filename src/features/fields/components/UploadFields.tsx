/**
 * Add fields to a coverslip: either multi-channel files (choose which two channels are channel 1 and 2) or
 * pairs of single-channel files; several fields in one upload, a progress bar, and one result per field. Files
 * can be chosen or dropped onto the dialog; a pair is named after both of its files until a name is typed.
 */
import { useId, useMemo, useState } from 'react';
import { InstrumentPicker } from '@/features/instruments';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { ErrorNotice } from '@/components/Caution';
import { inputClass } from '@/components/TextField';
import { PixelSizeUm, UploadChannelRef, ZStepUm, type FieldSummary, type UploadFieldPlan } from '@shared/schemas/fields';
import { cx } from '@/lib/cx';
import { NumberTextFor } from '@shared/schemas/common';
import { BoxMessage, useNumberBox } from '@/components/NumberBox';
import { useUploadFields } from '../api/useUploadFields';
import { formatBytes, inspectTiff, type FileChannels } from '../lib/inspect';
import { pairName, stem } from '../lib/pairName';
import { plural } from '@shared/format/plural';

type Mode = 'multi' | 'pairs';

const CHANNEL = NumberTextFor('Channel', UploadChannelRef.shape.channel.unwrap());

/**
 * A channel number typed by hand (the file's channels could not be read here): checked against the upload
 * plan's bound; a refused text stays with a message beside it and the row keeps its last valid channel.
 */
function ChannelBox({ value, disabled, onChange }: { value: number; disabled: boolean; onChange: (n: number) => void }) {
  const box = useNumberBox({ schema: CHANNEL, value, onChange });
  return (
    <>
      <input className={inputClass(!!box.error)} inputMode="numeric" disabled={disabled} {...box.input} />
      <BoxMessage box={box} as="span" className="block text-xs text-danger" />
    </>
  );
}

interface MultiRow {
  id: number;
  file: File;
  info: FileChannels | null;
  ch1: number;
  ch2: number;
  name: string;
}

interface PairRow {
  id: number;
  file1: File | null;
  file2: File | null;
  name: string;
  /** the name was typed: choosing files no longer renames the pair */
  typed?: boolean;
}

/** the pair's name from its files (both when they are chosen), unless one was typed */
const autoName = (r: PairRow): PairRow => (r.typed ? r : { ...r, name: r.file1 && r.file2 ? pairName(r.file1.name, r.file2.name) : '' });

let nextId = 1;
const TIFF_ACCEPT = '.tif,.tiff,image/tiff';

function channelLabel(c: { index: number; name: string | null }) {
  return c.name ? `${c.index} · ${c.name}` : `channel ${c.index}`;
}

/**
 * `defaultInstrumentId`: the study's default instrument, chosen beforehand (the person uploading may change it).
 * `onUploaded` hears of the fields each upload added (the calibration screen picks the new bead field with it);
 * `label` names the opening button.
 */
export function UploadFields({ coverslipId, defaultInstrumentId = null, onUploaded, label = 'Add fields…' }: { coverslipId: number; defaultInstrumentId?: number | null; onUploaded?: (fields: FieldSummary[]) => void; label?: string }) {
  const [open, setOpen] = useState(false);
  return (
    <>
      <div>
        <Button size="sm" variant="secondary" onClick={() => setOpen(true)}>
          {label}
        </Button>
      </div>
      {open && <UploadDialog coverslipId={coverslipId} defaultInstrumentId={defaultInstrumentId} onUploaded={onUploaded} onClose={() => setOpen(false)} />}
    </>
  );
}

function UploadDialog({ coverslipId, defaultInstrumentId, onUploaded, onClose }: { coverslipId: number; defaultInstrumentId: number | null; onUploaded?: (fields: FieldSummary[]) => void; onClose: () => void }) {
  const [mode, setMode] = useState<Mode>('multi');
  const [multi, setMulti] = useState<MultiRow[]>([]);
  const [pairs, setPairs] = useState<PairRow[]>([{ id: nextId++, file1: null, file2: null, name: '' }]);
  const [formError, setFormError] = useState<string | null>(null);
  const [instrumentId, setInstrumentId] = useState<number | null>(defaultInstrumentId);
  /** µm per pixel for files that carry none (empty: none given) */
  const [pixelSize, setPixelSize] = useState('');
  /** µm between slices for stacks whose files state none (empty: none given) */
  const [zStep, setZStep] = useState('');
  const { state, upload, cancel, reset } = useUploadFields(coverslipId);
  const busy = state.phase === 'uploading' || state.phase === 'processing';
  const modeName = useId();

  const addMultiFiles = (list: FileList | null) => {
    const files = Array.from(list ?? []);
    const rows = files.map((file) => ({ id: nextId++, file, info: null, ch1: 1, ch2: 2, name: stem(file.name) }) as MultiRow);
    setMulti((cur) => [...cur, ...rows]);
    for (const row of rows) {
      void inspectTiff(row.file).then((info) => setMulti((cur) => cur.map((r) => (r.id === row.id ? { ...r, info, ch2: info.channels.length >= 2 ? 2 : r.ch2 } : r))));
    }
  };

  const addPairFiles = (list: FileList | null) => {
    // several single-channel files at once: paired in name order (1st + 2nd, 3rd + 4th …); editable after
    const files = Array.from(list ?? []).sort((a, b) => a.name.localeCompare(b.name, undefined, { numeric: true }));
    const rows: PairRow[] = [];
    for (let i = 0; i < files.length; i += 2) rows.push(autoName({ id: nextId++, file1: files[i], file2: files[i + 1] ?? null, name: '' }));
    setPairs((cur) => [...cur.filter((r) => r.file1 || r.file2), ...rows]);
  };

  const [dropping, setDropping] = useState(false);
  const onDrop = (e: React.DragEvent) => {
    e.preventDefault();
    setDropping(false);
    if (busy || state.phase === 'done' || state.phase === 'failed') return;
    if (mode === 'multi') addMultiFiles(e.dataTransfer.files);
    else addPairFiles(e.dataTransfer.files);
  };

  const totalBytes = useMemo(() => {
    const s = new Set<File>();
    if (mode === 'multi') multi.forEach((r) => s.add(r.file));
    else pairs.forEach((r) => (r.file1 && s.add(r.file1), r.file2 && s.add(r.file2)));
    return Array.from(s).reduce((a, f) => a + f.size, 0);
  }, [mode, multi, pairs]);

  const submit = async () => {
    setFormError(null);
    const files: File[] = [];
    const idx = (f: File) => {
      let i = files.indexOf(f);
      if (i < 0) i = files.push(f) - 1;
      return i;
    };
    const plan: UploadFieldPlan[] = [];
    let pixelSizeUm: number | undefined;
    if (pixelSize.trim() !== '') {
      const px = PixelSizeUm.safeParse(Number(pixelSize));
      if (!px.success) return setFormError(`µm per pixel "${pixelSize}": ${px.error.issues[0]?.message ?? 'not a pixel size'}`);
      pixelSizeUm = px.data;
    }
    let zStepUm: number | undefined;
    if (zStep.trim() !== '') {
      const zs = ZStepUm.safeParse(Number(zStep));
      if (!zs.success) return setFormError(`µm between slices "${zStep}": ${zs.error.issues[0]?.message ?? 'not a z step'}`);
      zStepUm = zs.data;
    }
    if (mode === 'multi') {
      if (multi.length === 0) return setFormError('choose at least one file');
      for (const r of multi) {
        if (r.ch1 === r.ch2) return setFormError(`"${r.file.name}": channel 1 and channel 2 must be different channels`);
        plan.push({ name: r.name.trim() || undefined, ch1: { file: idx(r.file), channel: r.ch1 }, ch2: { file: idx(r.file), channel: r.ch2 }, instrumentId });
      }
    } else {
      const rows = pairs.filter((r) => r.file1 || r.file2);
      if (rows.length === 0) return setFormError('choose a channel 1 file and a channel 2 file');
      for (const [i, r] of rows.entries()) {
        if (!r.file1 || !r.file2) return setFormError(`pair ${i + 1} needs both a channel 1 and a channel 2 file`);
        if (!r.name.trim()) return setFormError(`pair ${i + 1} needs a field name`);
        plan.push({ name: r.name.trim() || undefined, ch1: { file: idx(r.file1), channel: 1 }, ch2: { file: idx(r.file2), channel: 1 }, instrumentId });
      }
    }
    const results = await upload(files, plan.map((p) => ({ ...p, ...(pixelSizeUm === undefined ? {} : { pixelSizeUm }), ...(zStepUm === undefined ? {} : { zStepUm }) })));
    const added = results.flatMap((r) => (r.ok ? [r.field] : []));
    if (added.length) onUploaded?.(added);
  };

  const startOver = () => {
    reset();
    setMulti([]);
    setPairs([{ id: nextId++, file1: null, file2: null, name: '' }]);
  };

  const footer =
    state.phase === 'done' || state.phase === 'failed' ? (
      <>
        <Button onClick={startOver}>Add more</Button>
        <Button variant="primary" onClick={onClose}>
          Done
        </Button>
      </>
    ) : (
      <>
        {busy ? (
          <Button onClick={cancel} disabled={state.phase === 'processing'}>
            Cancel upload
          </Button>
        ) : (
          <Button onClick={onClose}>Close</Button>
        )}
        <Button variant="primary" onClick={() => void submit()} pending={busy} disabled={busy}>
          Upload {totalBytes > 0 ? `(${formatBytes(totalBytes)})` : ''}
        </Button>
      </>
    );

  return (
    <Dialog
      open
      onClose={busy ? () => undefined : onClose}
      title="Add fields to this coverslip"
      width="lg"
      description="A field is one two-channel image. TIFF and OME-TIFF files: 8, 16 or 32-bit integer or 32-bit float; uncompressed, LZW, Deflate or PackBits."
      footer={<div className="flex justify-end gap-2">{footer}</div>}
    >
      {state.phase === 'done' || state.phase === 'failed' ? (
        <UploadResults state={state} />
      ) : (
        <div
          className={`-m-2 flex flex-col gap-4 rounded-md p-2 ${dropping ? 'bg-accent-soft/60 outline-2 outline-dashed outline-accent' : ''}`}
          aria-busy={busy}
          data-testid="upload-drop"
          onDragOver={(e) => {
            if (!Array.from(e.dataTransfer.types).includes('Files')) return;
            e.preventDefault();
            e.dataTransfer.dropEffect = 'copy';
            setDropping(true);
          }}
          onDragLeave={(e) => e.currentTarget.contains(e.relatedTarget as Node | null) || setDropping(false)}
          onDrop={onDrop}
        >
          <fieldset className="flex flex-wrap gap-4 text-sm" disabled={busy}>
            <legend className="sr-only">What the files hold</legend>
            <label className="flex items-center gap-2">
              <input type="radio" name={modeName} checked={mode === 'multi'} onChange={() => setMode('multi')} />
              Each file holds several channels
            </label>
            <label className="flex items-center gap-2">
              <input type="radio" name={modeName} checked={mode === 'pairs'} onChange={() => setMode('pairs')} />
              Each channel is its own file (pairs)
            </label>
          </fieldset>
          <InstrumentPicker label="Recorded on" value={instrumentId} onChange={setInstrumentId} disabled={busy} />

          <label className="flex flex-wrap items-center gap-2 text-sm">
            <span>µm per pixel, for files that carry none</span>
            <input className={cx(inputClass(false), 'w-28')} inputMode="decimal" value={pixelSize} onChange={(e) => setPixelSize(e.target.value)} disabled={busy} placeholder="optional" />
          </label>
          <label className="flex flex-wrap items-center gap-2 text-sm">
            <span>µm between z slices, for stacks whose files state none</span>
            <input className={cx(inputClass(false), 'w-28')} inputMode="decimal" value={zStep} onChange={(e) => setZStep(e.target.value)} disabled={busy} placeholder="optional" />
          </label>

          <p className="text-xs text-ink-soft">{dropping ? 'Drop the files to add them.' : 'Drop TIFF files anywhere on this dialog, or choose them below.'}</p>
          {mode === 'multi' ? (
            <div className="flex flex-col gap-3">
              <label className="text-sm">
                <span className="mb-1 block font-medium">Files</span>
                <input type="file" accept={TIFF_ACCEPT} multiple disabled={busy} onChange={(e) => (addMultiFiles(e.target.files), (e.target.value = ''))} />
              </label>
              {multi.length > 0 && (
                <ul className="flex flex-col gap-2" aria-label="Fields to add">
                  {multi.map((r) => (
                    <li key={r.id} className="rounded-md border border-ink/10 p-3 text-sm">
                      <div className="flex flex-wrap items-center justify-between gap-2">
                        <span className="font-mono text-xs">
                          {r.file.name} · {formatBytes(r.file.size)}
                          {r.info && !r.info.problem && ` · ${r.info.width}×${r.info.height}, ${plural(r.info.channels.length, 'channel')}${r.info.sizeZ > 1 ? `, ${r.info.sizeZ} z slices` : ''}`}
                        </span>
                        <Button size="sm" variant="ghost" disabled={busy} onClick={() => setMulti((cur) => cur.filter((x) => x.id !== r.id))} aria-label={`Remove ${r.file.name}`}>
                          Remove
                        </Button>
                      </div>
                      {r.info?.problem && <p className="mt-1 text-xs text-danger">{r.info.problem}</p>}
                      {r.info && !r.info.problem && r.info.channels.length < 2 && (
                        <p className="mt-1 text-xs text-danger">This file has one channel; a field needs two. Use “Each channel is its own file” to pair it with another file.</p>
                      )}
                      <div className="mt-2 grid grid-cols-1 gap-2 sm:grid-cols-3">
                        <label>
                          <span className="block text-xs text-ink-soft">Field name</span>
                          <input className={inputClass()} value={r.name} disabled={busy} onChange={(e) => setMulti((cur) => cur.map((x) => (x.id === r.id ? { ...x, name: e.target.value } : x)))} />
                        </label>
                        {(['ch1', 'ch2'] as const).map((k, i) => (
                          <label key={k}>
                            <span className="block text-xs text-ink-soft">
                              Channel {i + 1} <span aria-hidden="true">({i === 0 ? 'green' : 'magenta'} in previews)</span>
                            </span>
                            {r.info && r.info.channels.length > 0 ? (
                              <select className={inputClass()} value={r[k]} disabled={busy} onChange={(e) => setMulti((cur) => cur.map((x) => (x.id === r.id ? { ...x, [k]: Number(e.target.value) } : x)))}>
                                {r.info.channels.map((c) => (
                                  <option key={c.index} value={c.index}>
                                    {channelLabel(c)}
                                  </option>
                                ))}
                              </select>
                            ) : (
                              <ChannelBox value={r[k]} disabled={busy} onChange={(n) => setMulti((cur) => cur.map((x) => (x.id === r.id ? { ...x, [k]: n } : x)))} />
                            )}
                          </label>
                        ))}
                      </div>
                    </li>
                  ))}
                </ul>
              )}
            </div>
          ) : (
            <div className="flex flex-col gap-3">
              <label className="text-sm">
                <span className="mb-1 block font-medium">Pick many single-channel files (paired in name order)</span>
                <input type="file" accept={TIFF_ACCEPT} multiple disabled={busy} onChange={(e) => (addPairFiles(e.target.files), (e.target.value = ''))} />
              </label>
              <ul className="flex flex-col gap-2" aria-label="Pairs to add">
                {pairs.map((r, i) => (
                  <li key={r.id} className="grid grid-cols-1 gap-2 rounded-md border border-ink/10 p-3 text-sm sm:grid-cols-[1fr_1fr_1fr_auto] sm:items-end">
                    <label>
                      <span className="block text-xs text-ink-soft">Field name</span>
                      <input className={inputClass()} value={r.name} disabled={busy} placeholder={r.file1 && r.file2 ? undefined : 'named after both files once chosen'} onChange={(e) => setPairs((cur) => cur.map((x) => (x.id === r.id ? { ...x, name: e.target.value, typed: e.target.value.trim() !== '' } : x)))} />
                    </label>
                    {(['file1', 'file2'] as const).map((k, j) => (
                      <label key={k}>
                        <span className="block text-xs text-ink-soft">
                          Channel {j + 1} file{r[k] ? `: ${r[k]!.name}` : ''}
                        </span>
                        <input
                          type="file"
                          accept={TIFF_ACCEPT}
                          disabled={busy}
                          className="w-full text-xs"
                          onChange={(e) => {
                            const f = e.target.files?.[0] ?? null;
                            setPairs((cur) => cur.map((x) => (x.id === r.id ? autoName({ ...x, [k]: f }) : x)));
                          }}
                        />
                      </label>
                    ))}
                    <Button size="sm" variant="ghost" disabled={busy} onClick={() => setPairs((cur) => cur.filter((x) => x.id !== r.id))} aria-label={`Remove pair ${i + 1}`}>
                      Remove
                    </Button>
                  </li>
                ))}
              </ul>
              <div>
                <Button size="sm" disabled={busy} onClick={() => setPairs((cur) => [...cur, { id: nextId++, file1: null, file2: null, name: '' }])}>
                  Add a pair
                </Button>
              </div>
            </div>
          )}

          {formError && <ErrorNotice error={formError} />}
          {state.phase === 'uploading' && <ProgressBar loaded={state.progress.loaded} total={state.progress.total} />}
          {state.phase === 'processing' && <ProgressBar loaded={1} total={1} note="Checking and decoding the images…" />}
        </div>
      )}
    </Dialog>
  );
}

function ProgressBar({ loaded, total, note }: { loaded: number; total: number; note?: string }) {
  const pct = total > 0 ? Math.min(100, Math.round((loaded / total) * 100)) : 0;
  return (
    <div className="text-sm">
      <div role="progressbar" aria-label="Upload progress" aria-valuemin={0} aria-valuemax={100} aria-valuenow={pct} className="h-2 w-full overflow-hidden rounded bg-ink/10">
        <div className="h-full bg-accent transition-[width]" style={{ width: `${pct}%` }} />
      </div>
      <p className="mt-1 text-xs text-ink-soft">{note ?? `${formatBytes(loaded)} of ${formatBytes(total)} sent (${pct} %)`}</p>
    </div>
  );
}

function UploadResults({ state }: { state: Extract<ReturnType<typeof useUploadFields>['state'], { phase: 'done' | 'failed' }> }) {
  const results = state.results;
  const ok = results.filter((r) => r.ok).length;
  return (
    <div className="flex flex-col gap-3 text-sm">
      {state.phase === 'failed' && results.length === 0 && <ErrorNotice error={state.error} />}
      {results.length > 0 && (
        <p>
          {ok} of {plural(results.length, 'field')} added.
        </p>
      )}
      <ul className="flex flex-col gap-1" aria-label="Upload results">
        {results.map((r) => (
          <li key={r.index} className={r.ok ? 'text-ink' : 'text-danger'}>
            {r.ok ? (
              <>
                <span aria-hidden="true">✓ </span>
                <strong>{r.name}</strong> — {r.field.width}×{r.field.height}, {r.field.bitDepth}-bit {r.field.sampleFormat === 'float' ? 'float' : 'integer'}
                {r.field.sizeZ > 1 ? `, ${r.field.sizeZ} z slices` : ''}
                {r.field.saturated ? ' — contains saturated pixels' : ''}
              </>
            ) : (
              <>
                <span aria-hidden="true">✗ </span>
                <strong>{r.name}</strong>: {r.error}
              </>
            )}
          </li>
        ))}
      </ul>
    </div>
  );
}

export default UploadFields;
