/** Cells imported from a label image or stack, painted from their run-length masks (exact pixels, no tracing). */
import { useEffect, useRef } from 'react';
import type { FieldDetail } from '@shared/schemas/fields';
import { cellIndices } from '@shared/schemas/cells';
import type { Outline } from '../lib/outlineState';

export function LabelLayer({ field, outlines, selected }: { field: FieldDetail; outlines: Outline[]; selected: string | null }) {
  const ref = useRef<HTMLCanvasElement>(null);
  const labels = outlines.filter((o) => o.geometry.kind === 'label' || o.geometry.kind === 'label3d');
  const sig = labels.map((o) => o.key).join(',') + '|' + selected;
  useEffect(() => {
    const c = ref.current;
    if (!c || !labels.length) return;
    const W = field.width, H = field.height;
    c.width = W;
    c.height = H;
    const ctx = c.getContext('2d');
    if (!ctx) return;
    const im = ctx.createImageData(W, H);
    const d = new Uint32Array(im.data.buffer);
    // ABGR little-endian: soft white for cells, teal for the selected one
    const plain = 0x55f0f0f0, chosen = 0x996e760f;
    for (const o of labels) {
      const col = o.key === selected ? chosen : plain;
      // a 3-D label cell is painted by its footprint (every pixel it covers on some slice)
      for (const i of cellIndices(o.geometry, W, H)) d[i] = col;
    }
    ctx.putImageData(im, 0, 0);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [sig, field.width, field.height]);
  if (!labels.length) return null;
  return <canvas ref={ref} className="pointer-events-none absolute inset-0 h-full w-full" style={{ imageRendering: 'pixelated' }} />;
}
