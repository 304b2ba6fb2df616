/** "Import label image", "Import outlines" (GeoJSON) and "Find cells" (automatic outlines) dialogs. */
import { useId, useState } from 'react';
import { Button, Dialog, ErrorNotice } from '@/components';
import type { FieldSummary } from '@shared/schemas/fields';
import { NumberText, readNumberText } from '@shared/schemas/common';
import { formatAmount } from '@shared/format/origin';
import { fieldPreviewUrl } from '@/features/fields';
import { CELL_DEFAULTS_UM, SEED_MAX_PX, SEED_MIN_PX, SMOOTHING_MAX_PX, areaUnit, defaultsFor, lengthUnit, pixelsToArea, previewSummary, requestFor } from '../lib/findCells';
import { useImportLabels } from '../api/useImportLabels';
import { useImportOutlines } from '../api/useImportOutlines';
import { useAutoOutline } from '../api/useAutoOutline';
import { plural } from '@shared/format/plural';

/** A dialog that imports one file into a field's outlines: file box, a "replace earlier imports" box, Import. */
function FileImportDialog<R>({
  open,
  onClose,
  title,
  description,
  accept,
  fileLabel,
  replaceLabel,
  replaceDefault,
  mutation: m,
  done,
  onDone,
}: {
  open: boolean;
  onClose: () => void;
  title: string;
  description: string;
  accept: string;
  fileLabel: string;
  replaceLabel: string;
  replaceDefault: boolean;
  mutation: { mutate: (v: { file: File; replace: boolean }, o: { onSuccess: (r: R) => void }) => void; isPending: boolean; error: unknown };
  /** the notice after a successful import */
  done: (r: R, file: File) => string;
  onDone: (msg: string) => void;
}) {
  const [file, setFile] = useState<File | null>(null);
  const [replace, setReplace] = useState(replaceDefault);
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title={title}
      description={description}
      footer={
        <>
          <Button onClick={onClose}>Cancel</Button>
          <Button
            variant="primary"
            disabled={!file}
            pending={m.isPending}
            onClick={() =>
              file &&
              m.mutate(
                { file, replace },
                {
                  onSuccess: (r) => {
                    onDone(done(r, file));
                    onClose();
                  },
                },
              )
            }
          >
            Import
          </Button>
        </>
      }
    >
      <div className="space-y-3 text-sm">
        <input type="file" accept={accept} aria-label={fileLabel} onChange={(e) => setFile(e.target.files?.[0] ?? null)} />
        <label className="flex items-center gap-2">
          <input type="checkbox" checked={replace} onChange={(e) => setReplace(e.target.checked)} /> {replaceLabel}
        </label>
        <ErrorNotice error={m.error} />
      </div>
    </Dialog>
  );
}

export function ImportLabelsDialog({ fieldId, open, onClose, size, onDone }: { fieldId: number; open: boolean; onClose: () => void; size: [number, number]; onDone: (msg: string) => void }) {
  const m = useImportLabels(fieldId);
  return (
    <FileImportDialog
      open={open}
      onClose={onClose}
      title="Import a label image"
      description={`A single-channel TIFF of exactly ${size[0]} × ${size[1]} pixels: 0 is background, every positive value is one cell. Each cell keeps exactly its labelled pixels.`}
      accept=".tif,.tiff,image/tiff"
      fileLabel="Label image file"
      replaceLabel="Replace cells from an earlier label image"
      replaceDefault
      mutation={m}
      done={(r, file) => `${plural(r.labels, 'cell')} imported from ${file.name}`}
      onDone={onDone}
    />
  );
}

export function ImportOutlinesDialog({ fieldId, open, onClose, onDone }: { fieldId: number; open: boolean; onClose: () => void; onDone: (msg: string) => void }) {
  const m = useImportOutlines(fieldId);
  return (
    <FileImportDialog
      open={open}
      onClose={onClose}
      title="Import outlines (GeoJSON)"
      description="A GeoJSON FeatureCollection of Polygon or MultiPolygon features in this field's pixel coordinates (x right, y down, from the top-left corner). A feature's name and background flag come from its properties; holes are kept. A file with any fault is refused as a whole."
      accept=".geojson,.json,application/geo+json,application/json"
      fileLabel="GeoJSON file"
      replaceLabel="Replace outlines from an earlier GeoJSON import"
      replaceDefault={false}
      mutation={m}
      done={(r, file) => `${plural(r.features, 'outline')} imported from ${file.name}`}
      onDone={onDone}
    />
  );
}

/** One checked box of the dialog: its label, the typed text, and the message (tied to the box) when refused. */
function NumberBox({ label, value, onChange, error, inputMode }: { label: string; value: string; onChange: (v: string) => void; error: string | null; inputMode: 'decimal' | 'numeric' }) {
  const id = useId();
  return (
    <label className="flex flex-col gap-1">
      <span className="text-ink-soft">{label}</span>
      <input
        className="rounded border border-ink/20 bg-white px-1.5 py-1 text-sm aria-[invalid=true]:border-danger"
        value={value}
        onChange={(e) => onChange(e.target.value)}
        inputMode={inputMode}
        aria-invalid={!!error}
        aria-describedby={error ? id : undefined}
      />
      {error && (
        <span id={id} role="alert" className="text-xs text-danger">
          {error}
        </span>
      )}
    </label>
  );
}

/**
 * Automatic outlines, previewed before they are kept. Sizes and distances are in µm² / µm when the field's
 * pixel size is known (lib/findCells.ts: defaults for cultured cells at that scale, stated in the dialog), in
 * pixels otherwise. Typed numbers are checked as they are typed: the manual level against the data range of
 * the chosen intensities (field facts; the sum of both channels spans the sum of their ranges), sizes from
 * one pixel to the field. "Preview" stores nothing and shows what would be kept over the field; "Keep" stores
 * exactly those outlines (same settings); any change of a setting asks for a new preview.
 */
export function AutoOutlineDialog({
  fieldId,
  open,
  onClose,
  names,
  onDone,
  z,
  facts,
  size,
  pixelSizeUm,
}: {
  fieldId: number;
  open: boolean;
  onClose: () => void;
  names: [string, string];
  onDone: (msg: string) => void;
  z?: number | 'mip';
  facts: FieldSummary['facts'];
  size: [number, number];
  pixelSizeUm: number | null;
}) {
  const look = useAutoOutline(fieldId);
  const keep = useAutoOutline(fieldId);
  const scale = { pixelSizeUm };
  const d = defaultsFor(scale);
  const pixelCount = size[0] * size[1];
  const fieldArea = pixelsToArea(pixelCount, scale);
  const [channel, setChannel] = useState<'ch1' | 'ch2' | 'sum'>('sum');
  const [method, setMethod] = useState<'otsu' | 'manual'>('otsu');
  const [level, setLevel] = useState('');
  const [levelTyped, setLevelTyped] = useState(false);
  const [tried, setTried] = useState(false);
  const [split, setSplit] = useState(true);
  const [smoothing, setSmoothing] = useState(String(d.smoothing));
  const [seedDistance, setSeedDistance] = useState(String(d.seedDistance));
  const [minArea, setMinArea] = useState(String(d.minArea));
  const [maxArea, setMaxArea] = useState(d.maxArea === null ? '' : String(d.maxArea));
  const [replace, setReplace] = useState(true);
  const au = areaUnit(scale), lu = lengthUnit(scale);
  const range: [number, number] = channel === 'sum' ? [facts.ch1.min + facts.ch2.min, facts.ch1.max + facts.ch2.max] : [facts[channel].min, facts[channel].max];
  const lv = method === 'manual' ? readNumberText(NumberText('Level', { min: range[0], max: range[1] }), level) : null;
  // bounds in the shown unit: the request schema's pixel bounds times the pixel size; areas up to the field
  const u = pixelSizeUm ?? 1;
  const sm = readNumberText(NumberText('Smoothing', { min: 0, max: SMOOTHING_MAX_PX * u }), smoothing);
  const sd = split ? readNumberText(NumberText('Least distance', { min: SEED_MIN_PX * u, max: SEED_MAX_PX * u }), seedDistance) : null;
  const lo = readNumberText(NumberText('Smallest cell', pixelSizeUm ? { min: 0, max: fieldArea } : { min: 1, max: pixelCount, integer: true }), minArea);
  const hi = maxArea.trim() === '' ? null : readNumberText(NumberText('Largest cell', pixelSizeUm ? { min: lo.value ?? 0, max: fieldArea } : { min: lo.value ?? 1, max: pixelCount, integer: true }), maxArea);
  const boxError = lv?.error || sm.error || sd?.error || lo.error || hi?.error;
  const req = boxError
    ? null
    : requestFor({ channel, level: lv?.value ?? null, smoothing: sm.value!, split, seedDistance: sd?.value ?? 1, minArea: lo.value!, maxArea: hi?.value ?? null, replace, z }, scale, pixelCount);
  const key = req && !req.error ? JSON.stringify(req.body) : null;
  const previewed = look.data && look.variables && key === JSON.stringify({ ...look.variables, preview: undefined }) ? look.data : null;
  const summary = previewed ? previewSummary(previewed.outlines, scale) : null;
  const fmtA = (v: number) => formatAmount(v);
  const field = 'rounded border border-ink/20 bg-white px-1.5 py-1 text-sm';
  return (
    <Dialog
      open={open}
      onClose={onClose}
      width="lg"
      title="Find cells automatically"
      description="Smooth the image, threshold it, fill holes, split touching cells along the valleys of their distance map (watershed), and drop objects outside the size range. Look at the result first; the outlines you keep are ordinary, editable outlines that remember these settings."
      footer={
        <>
          <Button onClick={onClose}>Cancel</Button>
          <Button
            pending={look.isPending}
            onClick={() => {
              setTried(true);
              if (!req || req.error) return;
              look.mutate({ ...req.body, preview: true });
            }}
          >
            Preview
          </Button>
          <Button
            variant="primary"
            disabled={!previewed || previewed.outlines.length === 0}
            pending={keep.isPending}
            onClick={() => {
              if (!previewed || !req) return;
              keep.mutate(req.body, {
                onSuccess: (r) => {
                  onDone(`${plural(r.cells.length, 'cell')} found and kept (level ${r.level === null ? '—' : Number(r.level.toPrecision(5))}; ${r.droppedSmall} too small, ${r.droppedLarge} too large left out)`);
                  onClose();
                },
              });
            }}
          >
            {previewed ? `Keep ${plural(previewed.outlines.length, 'outline')}` : 'Keep'}
          </Button>
        </>
      }
    >
      <div className="grid grid-cols-2 gap-3 text-sm">
        <p className="col-span-2 text-xs text-ink-soft" data-testid="find-cells-scale">
          {pixelSizeUm
            ? `Sizes in µm² and µm (pixel size ${formatAmount(pixelSizeUm)} µm, from the file). Suggested for cultured cells at this scale: ${CELL_DEFAULTS_UM.minAreaUm2} to ${CELL_DEFAULTS_UM.maxAreaUm2.toLocaleString('en-US')} µm² per cell, smoothing ${CELL_DEFAULTS_UM.smoothingUm} µm so puncta merge into their cell, cell centres at least ${CELL_DEFAULTS_UM.seedDistanceUm} µm apart.`
            : 'The file records no pixel size, so sizes are in pixels. Set the smallest and largest cell to what a cell covers in this image.'}
        </p>
        <label className="flex flex-col gap-1">
          <span className="text-ink-soft">Intensities</span>
          <select className={field} value={channel} onChange={(e) => setChannel(e.target.value as typeof channel)}>
            <option value="sum">Sum of both channels</option>
            <option value="ch1">{names[0]}</option>
            <option value="ch2">{names[1]}</option>
          </select>
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-ink-soft">Threshold</span>
          <select className={field} value={method} onChange={(e) => setMethod(e.target.value as typeof method)}>
            <option value="otsu">Otsu (1979), brightest 0.5 % clipped</option>
            <option value="manual">A level I choose</option>
          </select>
        </label>
        {method === 'manual' && (
          <NumberBox label="Level (cells are brighter than this)" value={level} onChange={(v) => (setLevel(v), setLevelTyped(true))} error={levelTyped || tried ? (lv?.error ?? null) : null} inputMode="decimal" />
        )}
        <NumberBox label={`Smoothing before the threshold (${lu}, 0 = none)`} value={smoothing} onChange={setSmoothing} error={sm.error} inputMode="decimal" />
        <label className="flex items-center gap-2">
          <input type="checkbox" checked={split} onChange={(e) => setSplit(e.target.checked)} /> Split touching cells
        </label>
        {split && <NumberBox label={`Least distance between cell centres (${lu})`} value={seedDistance} onChange={setSeedDistance} error={sd?.error ?? null} inputMode="decimal" />}
        <NumberBox label={`Smallest cell (${au})`} value={minArea} onChange={setMinArea} error={lo.error} inputMode="decimal" />
        <NumberBox label={`Largest cell (${au}, empty = no limit)`} value={maxArea} onChange={setMaxArea} error={hi?.error ?? null} inputMode="decimal" />
        <label className="col-span-2 flex items-center gap-2">
          <input type="checkbox" checked={replace} onChange={(e) => setReplace(e.target.checked)} /> Replace earlier automatic outlines of this field
        </label>
        {req?.error && (
          <p role="alert" className="col-span-2 text-xs text-danger">
            {req.error}
          </p>
        )}
        <div className="col-span-2" data-testid="find-cells-preview" aria-live="polite">
          {previewed ? (
            <div className="space-y-2">
              <p>
                {summary
                  ? `${plural(summary.count, 'cell')} of ${fmtA(summary.smallest)} to ${fmtA(summary.largest)} ${au} (median ${fmtA(summary.median)} ${au})`
                  : 'No cell within the size range'}
                ; {previewed.droppedSmall} smaller and {previewed.droppedLarge} larger objects left out; threshold level {previewed.level === null ? '—' : formatAmount(previewed.level)}. Nothing is stored until you keep them.
              </p>
              <PreviewOutlines fieldId={fieldId} size={size} outlines={previewed.outlines} />
            </div>
          ) : (
            <p className="text-xs text-ink-soft">Preview shows the outlines over the field before anything is stored.</p>
          )}
        </div>
        <div className="col-span-2">
          <ErrorNotice error={look.error ?? keep.error} />
        </div>
      </div>
    </Dialog>
  );
}

/** The previewed outlines drawn over the field's picture, at the dialog's width. */
function PreviewOutlines({ fieldId, size, outlines }: { fieldId: number; size: [number, number]; outlines: { points: [number, number][] }[] }) {
  const [w, h] = size;
  return (
    <svg viewBox={`0 0 ${w} ${h}`} className="max-h-72 w-full rounded border border-ink/15 bg-ink" role="img" aria-label={`${plural(outlines.length, 'outline')} found, drawn over the field`} data-testid="find-cells-preview-image">
      <image href={fieldPreviewUrl(fieldId, { max: 512 })} x={0} y={0} width={w} height={h} preserveAspectRatio="none" />
      {outlines.map((o, i) => (
        <polygon key={i} points={o.points.map((p) => p.join(',')).join(' ')} fill="none" stroke="#facc15" strokeWidth={Math.max(1, w / 400)} vectorEffect="non-scaling-stroke" />
      ))}
    </svg>
  );
}
