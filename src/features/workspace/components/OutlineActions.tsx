/** "Import label image", "Import outlines" (GeoJSON) and "Find cells" (automatic outlines) dialogs. */
import { useId, useState } from 'react';
import { Button, Dialog, ErrorNotice } from '@/components';
import { AutoOutlineRequest } from '@shared/schemas/cells';
import type { FieldSummary } from '@shared/schemas/fields';
import { NumberText, NumberTextFor, readNumberText } from '@shared/schemas/common';
import { useImportLabels } from '../api/useImportLabels';
import { useImportOutlines } from '../api/useImportOutlines';
import { useAutoOutline } from '../api/useAutoOutline';
import { plural } from '@shared/format/plural';

export function ImportLabelsDialog({ fieldId, open, onClose, size, onDone }: { fieldId: number; open: boolean; onClose: () => void; size: [number, number]; onDone: (msg: string) => void }) {
  const m = useImportLabels(fieldId);
  const [file, setFile] = useState<File | null>(null);
  const [replace, setReplace] = useState(true);
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title="Import a label image"
      description={`A single-channel TIFF of exactly ${size[0]} × ${size[1]} pixels: 0 is background, every positive value is one cell. Each cell keeps exactly its labelled pixels.`}
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
                    onDone(`${plural(r.labels, 'cell')} imported from ${file.name}`);
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
        <input type="file" accept=".tif,.tiff,image/tiff" aria-label="Label image file" onChange={(e) => setFile(e.target.files?.[0] ?? null)} />
        <label className="flex items-center gap-2">
          <input type="checkbox" checked={replace} onChange={(e) => setReplace(e.target.checked)} /> Replace cells from an earlier label image
        </label>
        <ErrorNotice error={m.error} />
      </div>
    </Dialog>
  );
}

export function ImportOutlinesDialog({ fieldId, open, onClose, onDone }: { fieldId: number; open: boolean; onClose: () => void; onDone: (msg: string) => void }) {
  const m = useImportOutlines(fieldId);
  const [file, setFile] = useState<File | null>(null);
  const [replace, setReplace] = useState(false);
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title="Import outlines (GeoJSON)"
      description="A GeoJSON FeatureCollection of Polygon or MultiPolygon features in this field's pixel coordinates (x right, y down, from the top-left corner). A feature's name and background flag come from its properties; holes are kept. A file with any fault is refused as a whole."
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
                    onDone(`${plural(r.features, 'outline')} imported from ${file.name}`);
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
        <input type="file" accept=".geojson,.json,application/geo+json,application/json" aria-label="GeoJSON file" onChange={(e) => setFile(e.target.files?.[0] ?? null)} />
        <label className="flex items-center gap-2">
          <input type="checkbox" checked={replace} onChange={(e) => setReplace(e.target.checked)} /> Replace outlines from an earlier GeoJSON import
        </label>
        <ErrorNotice error={m.error} />
      </div>
    </Dialog>
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

const SEED_DISTANCE = NumberTextFor('Least distance', AutoOutlineRequest.shape.seedDistance.unwrap());

/**
 * Automatic outlines. Typed numbers are checked as they are typed: the manual level against the data range of
 * the chosen intensities (field facts; the sum of both channels spans the sum of their ranges), the seed
 * distance against the request schema, cell sizes as whole numbers from 1 to the field's pixel count (the
 * largest at least the smallest). While a box is refused its message stands beside it and nothing is sent.
 */
export function AutoOutlineDialog({ fieldId, open, onClose, names, onDone, z, facts, pixelCount }: { fieldId: number; open: boolean; onClose: () => void; names: [string, string]; onDone: (msg: string) => void; z?: number | 'mip'; facts: FieldSummary['facts']; pixelCount: number }) {
  const m = useAutoOutline(fieldId);
  const [channel, setChannel] = useState<'ch1' | 'ch2' | 'sum'>('sum');
  const [method, setMethod] = useState<'otsu' | 'manual'>('otsu');
  const [level, setLevel] = useState('');
  const [levelTyped, setLevelTyped] = useState(false);
  const [tried, setTried] = useState(false);
  const [split, setSplit] = useState(true);
  const [seedDistance, setSeedDistance] = useState('10');
  const [minPixels, setMinPixels] = useState('30');
  const [maxPixels, setMaxPixels] = useState('');
  const [replace, setReplace] = useState(true);
  const range: [number, number] = channel === 'sum' ? [facts.ch1.min + facts.ch2.min, facts.ch1.max + facts.ch2.max] : [facts[channel].min, facts[channel].max];
  const lv = method === 'manual' ? readNumberText(NumberText('Level', { min: range[0], max: range[1] }), level) : null;
  const sd = split ? readNumberText(SEED_DISTANCE, seedDistance) : null;
  const lo = readNumberText(NumberText('Smallest cell', { min: 1, max: pixelCount, integer: true }), minPixels);
  const hi = maxPixels.trim() === '' ? null : readNumberText(NumberText('Largest cell', { min: lo.value ?? 1, max: pixelCount, integer: true }), maxPixels);
  const invalid = !!(lv?.error || sd?.error || lo.error || hi?.error);
  const body = (): AutoOutlineRequest => ({
    channel,
    threshold: lv?.value != null ? { method: 'manual', level: lv.value } : { method: 'otsu' },
    fillHoles: true,
    split,
    ...(sd?.value != null ? { seedDistance: sd.value } : {}),
    minPixels: lo.value!,
    maxPixels: hi?.value ?? null,
    replace,
    ...(z !== undefined ? { z } : {}),
  });
  const field = 'rounded border border-ink/20 bg-white px-1.5 py-1 text-sm';
  return (
    <Dialog
      open={open}
      onClose={onClose}
      width="lg"
      title="Find cells automatically"
      description="Threshold the image, fill holes, split touching cells along the valleys of their distance map (watershed), and drop objects outside the size range. The outlines are ordinary, editable outlines."
      footer={
        <>
          <Button onClick={onClose}>Cancel</Button>
          <Button
            variant="primary"
            pending={m.isPending}
            onClick={() => {
              setTried(true);
              if (invalid) return;
              m.mutate(body(), {
                onSuccess: (r) => {
                  onDone(`${plural(r.cells.length, 'cell')} found (level ${r.level === null ? '—' : Number(r.level.toPrecision(5))}; ${r.droppedSmall} too small, ${r.droppedLarge} too large left out)`);
                  onClose();
                },
              });
            }}
          >
            Find cells
          </Button>
        </>
      }
    >
      <div className="grid grid-cols-2 gap-3 text-sm">
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
        <label className="flex items-center gap-2">
          <input type="checkbox" checked={split} onChange={(e) => setSplit(e.target.checked)} /> Split touching cells
        </label>
        {split && (
          <NumberBox label="Least distance between cell centres (px)" value={seedDistance} onChange={setSeedDistance} error={sd?.error ?? null} inputMode="decimal" />
        )}
        <NumberBox label="Smallest cell (pixels)" value={minPixels} onChange={setMinPixels} error={lo.error} inputMode="numeric" />
        <NumberBox label="Largest cell (pixels, empty = no limit)" value={maxPixels} onChange={setMaxPixels} error={hi?.error ?? null} inputMode="numeric" />
        <label className="col-span-2 flex items-center gap-2">
          <input type="checkbox" checked={replace} onChange={(e) => setReplace(e.target.checked)} /> Replace earlier automatic outlines of this field
        </label>
        <div className="col-span-2">
          <ErrorNotice error={m.error} />
        </div>
      </div>
    </Dialog>
  );
}
