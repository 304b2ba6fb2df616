/**
 * The composite before and after alignment: channel 1 green, channel 2 magenta, drawn in the pixel worker
 * (lib/composite.ts) with channel 2 as recorded or resampled by the shift (the runs' bilinear alignment).
 * A switch flips between the two; "Centre, enlarged" shows the middle 96 px at 4 px per pixel, where a
 * shift of one pixel is visible. Black: pixels not measured once aligned (sampled outside the image).
 */
import { useEffect, useId, useRef, useState } from 'react';
import { ErrorNotice, Loading } from '@/components';
import { useFieldPixels } from '@/features/fields';
import { formatFixed } from '@shared/format/number';
import { useScatter, type CompositeView } from '../lib/useScatter';

export interface CompositeDrawer {
  ready: boolean;
  composite: CompositeView | null;
  compositeError: string | null;
  requestComposite: (shift: { dx: number; dy: number } | null) => void;
}

const CROP = 96;
const ZOOM = 4;

export function AlignmentComposite({ drawer, shift, title = 'Composite' }: { drawer: CompositeDrawer; shift: { dx: number; dy: number } | null; title?: string }) {
  const [aligned, setAligned] = useState(true);
  const [centre, setCentre] = useState(false);
  const canvas = useRef<HTMLCanvasElement>(null);
  const id = useId();
  const asked = aligned && shift ? shift : null;
  const { ready, requestComposite, composite } = drawer;
  useEffect(() => {
    if (ready) requestComposite(asked);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [ready, asked?.dx, asked?.dy]);
  const shown = composite && (composite.shift?.dx ?? null) === (asked?.dx ?? null) && (composite.shift?.dy ?? null) === (asked?.dy ?? null) ? composite : null;
  useEffect(() => {
    const c = canvas.current;
    if (!c || !shown) return;
    const ctx = c.getContext('2d');
    if (!ctx) return;
    const img = new ImageData(new Uint8ClampedArray(shown.rgba), shown.width, shown.height);
    if (!centre) {
      c.width = shown.width;
      c.height = shown.height;
      ctx.putImageData(img, 0, 0);
      return;
    }
    const w = Math.min(CROP, shown.width), h = Math.min(CROP, shown.height);
    const x0 = Math.floor((shown.width - w) / 2), y0 = Math.floor((shown.height - h) / 2);
    const off = document.createElement('canvas');
    off.width = w;
    off.height = h;
    off.getContext('2d')?.putImageData(img, -x0, -y0);
    c.width = w * ZOOM;
    c.height = h * ZOOM;
    ctx.imageSmoothingEnabled = false;
    ctx.drawImage(off, 0, 0, w * ZOOM, h * ZOOM);
  }, [shown, centre]);
  const what = asked ? `channel 2 aligned by (${formatFixed(asked.dx, 2)}, ${formatFixed(asked.dy, 2)}) px` : 'channel 2 as recorded';
  return (
    <section aria-labelledby={`${id}-title`} className="space-y-2" data-testid="alignment-composite">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h3 id={`${id}-title`} className="text-sm font-semibold">
          {title}
        </h3>
        <div className="flex flex-wrap gap-3 text-sm">
          <label className="flex items-center gap-1">
            <input type="checkbox" checked={aligned && !!shift} disabled={!shift} onChange={(e) => setAligned(e.target.checked)} />
            Align channel 2
          </label>
          <label className="flex items-center gap-1">
            <input type="checkbox" checked={centre} onChange={(e) => setCentre(e.target.checked)} />
            Centre, enlarged
          </label>
        </div>
      </div>
      {drawer.compositeError ? (
        <ErrorNotice error={drawer.compositeError} />
      ) : (
        <div className="relative max-w-md">
          <canvas ref={canvas} role="img" aria-label={`Composite of both channels, ${what}`} className="h-auto w-full bg-black" style={{ imageRendering: centre ? 'pixelated' : 'auto' }} />
          {!shown && (
            <div className="absolute inset-0 grid place-items-center">
              <Loading label="Drawing…" />
            </div>
          )}
        </div>
      )}
      <p className="text-xs text-ink-soft" data-testid="alignment-composite-state">
        Showing {what}. Green is channel 1, magenta channel 2; where they match the picture turns white.{asked ? ' Black edges were sampled outside the image and are not measured.' : ''}
      </p>
    </section>
  );
}

/** The composite of a stored field (its pixels fetched and drawn in a worker of its own), for pages other than the workspace. */
export function FieldComposite({ fieldId, shift, title }: { fieldId: number; shift: { dx: number; dy: number } | null; title?: string }) {
  const pixels = useFieldPixels(fieldId, undefined);
  const drawer = useScatter(pixels.data, null);
  if (pixels.isError) return <ErrorNotice error={pixels.error} />;
  return <AlignmentComposite drawer={drawer} shift={shift} title={title} />;
}
