/** "Import label image" and "Find cells" (automatic outlines) dialogs. */
import { useState } from 'react';
import { Button, Dialog, ErrorNotice } from '@/components';
import type { AutoOutlineRequest } from '@shared/schemas/cells';
import { useImportLabels } from '../api/useImportLabels';
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

export function AutoOutlineDialog({ fieldId, open, onClose, names, onDone, z }: { fieldId: number; open: boolean; onClose: () => void; names: [string, string]; onDone: (msg: string) => void; z?: number | 'mip' }) {
  const m = useAutoOutline(fieldId);
  const [channel, setChannel] = useState<'ch1' | 'ch2' | 'sum'>('sum');
  const [method, setMethod] = useState<'otsu' | 'manual'>('otsu');
  const [level, setLevel] = useState('');
  const [split, setSplit] = useState(true);
  const [seedDistance, setSeedDistance] = useState('10');
  const [minPixels, setMinPixels] = useState('30');
  const [maxPixels, setMaxPixels] = useState('');
  const [replace, setReplace] = useState(true);
  const body = (): AutoOutlineRequest => ({
    channel,
    threshold: method === 'otsu' ? { method: 'otsu' } : { method: 'manual', level: Number(level) },
    fillHoles: true,
    split,
    seedDistance: Number(seedDistance) || 10,
    minPixels: Math.max(1, Math.round(Number(minPixels) || 1)),
    maxPixels: maxPixels.trim() ? Math.round(Number(maxPixels)) : null,
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
            onClick={() =>
              m.mutate(body(), {
                onSuccess: (r) => {
                  onDone(`${plural(r.cells.length, 'cell')} found (level ${r.level === null ? '—' : Number(r.level.toPrecision(5))}; ${r.droppedSmall} too small, ${r.droppedLarge} too large left out)`);
                  onClose();
                },
              })
            }
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
          <label className="flex flex-col gap-1">
            <span className="text-ink-soft">Level (cells are brighter than this)</span>
            <input className={field} value={level} onChange={(e) => setLevel(e.target.value)} inputMode="decimal" />
          </label>
        )}
        <label className="flex items-center gap-2">
          <input type="checkbox" checked={split} onChange={(e) => setSplit(e.target.checked)} /> Split touching cells
        </label>
        {split && (
          <label className="flex flex-col gap-1">
            <span className="text-ink-soft">Least distance between cell centres (px)</span>
            <input className={field} value={seedDistance} onChange={(e) => setSeedDistance(e.target.value)} inputMode="numeric" />
          </label>
        )}
        <label className="flex flex-col gap-1">
          <span className="text-ink-soft">Smallest cell (pixels)</span>
          <input className={field} value={minPixels} onChange={(e) => setMinPixels(e.target.value)} inputMode="numeric" />
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-ink-soft">Largest cell (pixels, empty = no limit)</span>
          <input className={field} value={maxPixels} onChange={(e) => setMaxPixels(e.target.value)} inputMode="numeric" />
        </label>
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
