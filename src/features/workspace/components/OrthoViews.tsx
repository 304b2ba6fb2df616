/**
 * Orthogonal views of a stack: the XZ plane through row y and the YZ plane through column x of the chosen
 * point (typed, picked on a view, or following the cursor over the image), painted like the viewer (same view
 * and shown intensities) with every cell's outline on the plane, so its z range or 3-D label extent shows.
 * Depth is drawn to scale (z step ÷ pixel size) when both are known. Each view fetches only its section
 * (GET /api/fields/:id/pixels?section=…), never the whole stack. Clicking a view moves the point along it and
 * shows the slice clicked.
 */
import { useEffect, useMemo, useRef } from 'react';
import type { FieldDetail } from '@shared/schemas/fields';
import { NumberText } from '@shared/schemas/common';
import { useFieldSection } from '@/features/fields';
import { BoxMessage, ErrorNotice, cx, inputClass, useNumberBox } from '@/components';
import { sectionAcross, sectionOutlines, sectionRgba, valueRange, zScaleOf, type SectionAxis } from '../lib/orthoView';
import type { Outline } from '../lib/outlineState';
import type { DisplaySettings } from './Viewer';

type Range = [number, number];

/** Tallest a view is drawn (CSS pixels); a deeper stack is drawn narrower to keep its proportions. */
const MAX_VIEW_HEIGHT = 240;

export interface OrthoViewsProps {
  field: FieldDetail;
  display: DisplaySettings;
  /** the shown intensities the viewer uses (set by hand, else the server's automatic ones), null before known */
  ranges: [Range | null, Range | null];
  point: [number, number];
  onPoint: (p: [number, number]) => void;
  follow: boolean;
  onFollow: (on: boolean) => void;
  outlines: Outline[];
  selected: string | null;
  /** show slice k (0-based) in the viewer */
  onSlice: (k: number) => void;
}

export function OrthoViews({ field, display, ranges, point, onPoint, follow, onFollow, outlines, selected, onSlice }: OrthoViewsProps) {
  const zs = zScaleOf(field.pixelSizeUm, field.zStepUm);
  const xBox = useNumberBox({ schema: NumberText('point x', { min: 0, max: field.width - 1, integer: true }), value: point[0], onChange: (x) => onPoint([x, point[1]]) });
  const yBox = useNumberBox({ schema: NumberText('point y', { min: 0, max: field.height - 1, integer: true }), value: point[1], onChange: (y) => onPoint([point[0], y]) });
  const shownZ = typeof display.z === 'number' ? display.z : display.z === undefined ? Math.floor((field.sizeZ - 1) / 2) : null;
  return (
    <div className="space-y-2 text-sm">
      <div className="flex flex-wrap items-center gap-3">
        <label className="inline-flex items-center gap-1">
          <span>Point x</span>
          <input className={cx(inputClass(!!xBox.error), 'py-0.5')} style={{ width: '5rem' }} inputMode="numeric" {...xBox.input} />
        </label>
        <label className="inline-flex items-center gap-1">
          <span>Point y</span>
          <input className={cx(inputClass(!!yBox.error), 'py-0.5')} style={{ width: '5rem' }} inputMode="numeric" {...yBox.input} />
        </label>
        <label className="inline-flex items-center gap-2">
          <input type="checkbox" checked={follow} onChange={(e) => onFollow(e.target.checked)} />
          Follow the cursor over the image
        </label>
      </div>
      <BoxMessage box={xBox} className="text-xs text-danger" />
      <BoxMessage box={yBox} className="text-xs text-danger" />
      <p className="text-xs text-ink-soft" data-testid="ortho-scale">
        {zs !== null
          ? `Depth to scale: ${um(field.zStepUm!)} µm between slices over ${um(field.pixelSizeUm!)} µm per pixel, so each slice is drawn ${fmtScale(zs)} pixels tall.`
          : 'Depth is drawn one pixel per slice: the voxel size is not known (give the pixel size and the z step above to draw it to scale).'}
      </p>
      <SectionView axis="xz" at={point[1]} cross={point[0]} {...{ field, display, ranges, outlines, selected, zs, shownZ }} onPick={(u, k) => (onPoint([u, point[1]]), onSlice(k))} />
      <SectionView axis="yz" at={point[0]} cross={point[1]} {...{ field, display, ranges, outlines, selected, zs, shownZ }} onPick={(u, k) => (onPoint([point[0], u]), onSlice(k))} />
    </div>
  );
}

/** µm for people: at most four significant digits. */
const um = (v: number) => (Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(4))));
const fmtScale = (v: number) => (v >= 10 ? v.toFixed(0) : v >= 1 ? v.toFixed(1) : v.toPrecision(2));

interface SectionViewProps {
  axis: SectionAxis;
  /** the row (xz) or column (yz) the plane passes through */
  at: number;
  /** the point's position along the plane (its x on XZ, its y on YZ) */
  cross: number;
  field: FieldDetail;
  display: DisplaySettings;
  ranges: [Range | null, Range | null];
  outlines: Outline[];
  selected: string | null;
  zs: number | null;
  shownZ: number | null;
  onPick: (u: number, k: number) => void;
}

function SectionView({ axis, at, cross, field, display, ranges, outlines, selected, zs, shownZ, onPick }: SectionViewProps) {
  const section = useFieldSection(field.id, axis, at);
  const canvas = useRef<HTMLCanvasElement>(null);
  const across = sectionAcross(axis, field.width, field.height);
  const Z = field.sizeZ;
  const data = section.data;
  useEffect(() => {
    const c = canvas.current;
    if (!c || !data || data.width !== across || data.height !== Z) return;
    c.width = across;
    c.height = Z;
    const ctx = c.getContext('2d');
    if (!ctx) return;
    const r1 = ranges[0] ?? valueRange(data.ch1);
    const r2 = ranges[1] ?? valueRange(data.ch2);
    const img = ctx.createImageData(across, Z);
    img.data.set(sectionRgba(data.ch1, data.ch2, display.view, r1, r2));
    ctx.putImageData(img, 0, 0);
  }, [data, across, Z, display.view, ranges]);
  const paths = useMemo(() => sectionOutlines(outlines, field.width, field.height, Z, axis, at), [outlines, field.width, field.height, Z, axis, at]);
  const aspect = (Z * (zs ?? 1)) / across;
  const what = axis === 'xz' ? `XZ plane through row y = ${at}` : `YZ plane through column x = ${at}`;
  const along = axis === 'xz' ? 'x' : 'y';
  return (
    <figure className="space-y-1" data-testid={`ortho-${axis}`}>
      <figcaption className="text-xs font-medium">
        {what} <span className="font-normal text-ink-soft">({along} across, slices 1–{Z} top to bottom; {paths.length === 1 ? 'one cell' : `${paths.length} cells`} on it)</span>
      </figcaption>
      {section.isError ? (
        <ErrorNotice error={section.error} />
      ) : (
        <div
          className="relative cursor-crosshair bg-ink"
          style={{ width: `min(100%, ${MAX_VIEW_HEIGHT / aspect}px)`, aspectRatio: `${across} / ${Z * (zs ?? 1)}` }}
          onClick={(e) => {
            const r = e.currentTarget.getBoundingClientRect();
            const u = Math.min(across - 1, Math.max(0, Math.floor(((e.clientX - r.left) / r.width) * across)));
            const k = Math.min(Z - 1, Math.max(0, Math.floor(((e.clientY - r.top) / r.height) * Z)));
            onPick(u, k);
          }}
        >
          <canvas ref={canvas} role="img" aria-label={`${what}: ${along} across, slices 1 to ${Z} top to bottom`} className="absolute inset-0 h-full w-full" style={{ imageRendering: 'pixelated' }} />
          <svg className="pointer-events-none absolute inset-0 h-full w-full" viewBox={`0 0 ${across} ${Z}`} preserveAspectRatio="none" aria-hidden="true">
            {paths.map(({ outline: o, d }) => (
              <path
                key={o.key}
                data-outline={o.key}
                d={d}
                fill={o.key === selected ? 'rgba(15,118,110,0.25)' : 'none'}
                fillRule="evenodd"
                stroke={o.key === selected ? '#0f766e' : o.role === 'background' ? '#f59e0b' : '#f5f5f4'}
                strokeWidth={o.key === selected ? 2 : 1.25}
                strokeDasharray={o.role === 'background' ? '6 4' : undefined}
                vectorEffect="non-scaling-stroke"
              />
            ))}
            <line x1={cross + 0.5} x2={cross + 0.5} y1={0} y2={Z} stroke="#facc15" strokeWidth={1} strokeDasharray="3 3" vectorEffect="non-scaling-stroke" />
            {shownZ !== null && <line x1={0} x2={across} y1={shownZ + 0.5} y2={shownZ + 0.5} stroke="#facc15" strokeWidth={1} strokeDasharray="3 3" vectorEffect="non-scaling-stroke" />}
          </svg>
        </div>
      )}
    </figure>
  );
}

