/**
 * The field viewer: the preview image (composite or one channel, at the zoom's resolution level; or a composite
 * drawn in the browser with channel 2 aligned, `imageOverride`) with the
 * outlines on top. Zoom by wheel / pinch / buttons / keys, pan by dragging empty space (or Space + drag,
 * middle button), fit and 1:1. The outline tools draw in image pixel coordinates, with the pointer or with the
 * keyboard cursor (arrows move it, Shift+arrows faster, Enter places a point or corner, Esc cancels).
 */
import { useCallback, useEffect, useLayoutEffect, useMemo, useRef, useState, type PointerEvent as RPointerEvent } from 'react';
import type { FieldDetail } from '@shared/schemas/fields';
import type { CellRole } from '@shared/schemas/cells';
import { cx } from '@/components';
import { boxFromDrag, fitView, traceFromStroke, ellipseFromDrag, pathOf, polygonFromClicks, previewMax, scaleBar, toImage, zoomAt, type View } from '../lib/draw';
import { handlesOf, nearestEdge, type Outline, type OutlineAction, type Point } from '../lib/outlineState';
import { LabelLayer } from './LabelLayer';
import { plural } from '@shared/format/plural';
import { runsContain } from '@shared/analysis/rle';
import { cursorStep, followCursor, isArrow, moveCursor, startCursor } from '../lib/keyCursor';

export type Tool = 'select' | 'box' | 'ellipse' | 'polygon' | 'trace';

export interface DisplaySettings {
  view: 'composite' | 'ch1' | 'ch2';
  z: number | 'mip' | undefined;
  /** null = automatic (percentiles on the server) */
  range1: [number, number] | null;
  range2: [number, number] | null;
}

type Drag =
  | { kind: 'pan'; sx: number; sy: number; v: View }
  | { kind: 'shape'; tool: 'box' | 'ellipse'; a: Point; b: Point }
  | { kind: 'stroke'; points: Point[] }
  | { kind: 'move'; key: string; last: Point; started: boolean }
  | { kind: 'handle'; key: string; index: number; started: boolean };

export interface ViewerProps {
  field: FieldDetail;
  display: DisplaySettings;
  outlines: Outline[];
  selected: string | null;
  tool: Tool;
  canEdit: boolean;
  newRole: CellRole;
  dispatch: (a: OutlineAction) => void;
  /** ranges the server chose when the shown intensities are automatic */
  onAutoRanges?: (r: [number, number][]) => void;
  /** true while a drag changes an outline (the save loop waits) */
  onGesture?: (active: boolean) => void;
  /** commands from the toolbar / keyboard: incremented counters */
  command?: { kind: 'fit' | 'one' | 'in' | 'out'; n: number } | null;
  /** drawn over the outlines in image coordinates (pixels), e.g. the spot layer; takes no pointer events */
  overlay?: React.ReactNode;
  /** a picture drawn in the browser shown instead of the server's preview (the composite with channel 2 aligned) */
  imageOverride?: string | null;
  /** where the cursor is over the image (the pointer, or the keyboard cursor when it moves last), null when it leaves */
  onCursor?: (p: Point | null) => void;
  /** the pixel the orthogonal views pass through: its row and column are marked across the image */
  marker?: Point | null;
}

const SELECT_COLOR = '#0f766e';
const CELL_COLOR = '#f5f5f4';
const BG_COLOR = '#f59e0b';

export function Viewer({ field, display, outlines, selected, tool, canEdit, newRole, dispatch, onAutoRanges, onGesture, command, overlay, imageOverride, onCursor, marker }: ViewerProps) {
  const box = useRef<HTMLDivElement>(null);
  const [size, setSize] = useState({ w: 800, h: 600 });
  const [view, setView] = useState<View | null>(null);
  const [drag, setDrag] = useState<Drag | null>(null);
  const [draft, setDraft] = useState<Point[]>([]);
  const [hover, setHover] = useState<Point | null>(null);
  const [space, setSpace] = useState(false);
  /** the keyboard cursor (image coordinates), shown once an arrow key moves it; the pointer hides it */
  const [kc, setKc] = useState<Point | null>(null);
  /** keyboard drawing: the first corner of a box/ellipse, or the points of a trace so far */
  const [anchor, setAnchor] = useState<Point | null>(null);
  const [kTrace, setKTrace] = useState<Point[] | null>(null);
  const [said, setSaid] = useState('');
  const pointers = useRef(new Map<number, { x: number; y: number }>());
  const pinch = useRef<{ d: number; mx: number; my: number; v: View } | null>(null);
  const W = field.width, H = field.height;
  const cursorOut = useRef(onCursor);
  cursorOut.current = onCursor;
  useEffect(() => cursorOut.current?.(kc ?? hover), [kc, hover]);

  // container size
  useLayoutEffect(() => {
    const el = box.current;
    if (!el) return;
    const ro = new ResizeObserver(() => setSize({ w: el.clientWidth, h: el.clientHeight }));
    ro.observe(el);
    setSize({ w: el.clientWidth, h: el.clientHeight });
    return () => ro.disconnect();
  }, []);
  // first fit; while the user has not zoomed or panned, fit again when the box changes size (layout settling, window resize)
  const autoView = useRef<View | null>(null);
  const viewNow = useRef(view);
  viewNow.current = view;
  useEffect(() => {
    if (size.w <= 0 || size.h <= 0) return;
    const cur = viewNow.current;
    if (cur && cur !== autoView.current) return;
    const f = fitView(W, H, size.w, size.h);
    autoView.current = f;
    setView(f);
  }, [size, W, H]);

  const v = view ?? fitView(W, H, size.w, size.h);
  const applyCommand = useCallback(
    (kind: 'fit' | 'one' | 'in' | 'out') => {
      setView((cur) => {
        const c = cur ?? fitView(W, H, size.w, size.h);
        if (kind === 'fit') return (autoView.current = fitView(W, H, size.w, size.h));
        if (kind === 'one') return zoomAt(c, 1 / c.scale, size.w / 2, size.h / 2);
        return zoomAt(c, kind === 'in' ? 1.5 : 1 / 1.5, size.w / 2, size.h / 2);
      });
    },
    [W, H, size],
  );
  useEffect(() => {
    if (command) applyCommand(command.kind);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [command?.n]);

  // wheel zoom (non-passive so the page does not scroll); ctrl+wheel is a trackpad pinch
  useEffect(() => {
    const el = box.current;
    if (!el) return;
    const onWheel = (e: WheelEvent) => {
      e.preventDefault();
      const r = el.getBoundingClientRect();
      const k = Math.exp(-e.deltaY * (e.ctrlKey ? 0.01 : 0.0015));
      setView((cur) => zoomAt(cur ?? fitView(W, H, el.clientWidth, el.clientHeight), k, e.clientX - r.left, e.clientY - r.top));
    };
    el.addEventListener('wheel', onWheel, { passive: false });
    return () => el.removeEventListener('wheel', onWheel);
  }, [W, H]);

  // preview image at the level the zoom needs; kept until the next one has loaded
  const level = previewMax(Math.max(W, H), v.scale, typeof window !== 'undefined' ? window.devicePixelRatio || 1 : 1);
  const previewUrl = useMemo(() => {
    const q = new URLSearchParams({ view: display.view, max: String(level) });
    if (display.z !== undefined) q.set('z', String(display.z));
    if (display.range1) q.set('lo1', String(display.range1[0])), q.set('hi1', String(display.range1[1]));
    if (display.range2) q.set('lo2', String(display.range2[0])), q.set('hi2', String(display.range2[1]));
    return `/api/fields/${field.id}/preview.png?${q}`;
  }, [field.id, display, level]);
  const [img, setImg] = useState<{ url: string; src: string } | null>(null);
  const [imgError, setImgError] = useState<string | null>(null);
  useEffect(() => {
    const ctrl = new AbortController();
    const t = setTimeout(async () => {
      try {
        const res = await fetch(previewUrl, { credentials: 'same-origin', signal: ctrl.signal });
        if (!res.ok) {
          let msg = `preview failed (${res.status})`;
          try {
            msg = ((await res.json()) as { error?: string }).error ?? msg;
          } catch {
            /* not JSON */
          }
          setImgError(msg);
          return;
        }
        const ranges = (res.headers.get('x-syntopy-range') ?? '')
          .split(';')
          .filter(Boolean)
          .map((p) => p.split(',').map(Number) as [number, number]);
        const blob = await res.blob();
        const src = URL.createObjectURL(blob);
        setImg((old) => {
          if (old) setTimeout(() => URL.revokeObjectURL(old.src), 1000);
          return { url: previewUrl, src };
        });
        setImgError(null);
        if (ranges.length) onAutoRanges?.(ranges);
      } catch (e) {
        if ((e as Error).name !== 'AbortError') setImgError((e as Error).message);
      }
    }, 120);
    return () => {
      clearTimeout(t);
      ctrl.abort();
    };
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [previewUrl]);

  // Space held = pan; the keyboard cursor; Enter / Esc / Backspace while drawing. One listener for the viewer's
  // life reading the latest render through a ref: a listener re-added on every render misses the key whose
  // handler elsewhere (Esc clearing the selection) re-renders during the same event.
  const onKeyDown = useRef<(e: KeyboardEvent) => void>(() => {});
  const onKeyUp = useRef<(e: KeyboardEvent) => void>(() => {});
  useEffect(() => {
    const down = (e: KeyboardEvent) => onKeyDown.current(e);
    const up = (e: KeyboardEvent) => onKeyUp.current(e);
    window.addEventListener('keydown', down);
    window.addEventListener('keyup', up);
    return () => {
      window.removeEventListener('keydown', down);
      window.removeEventListener('keyup', up);
    };
  }, []);
  {
    onKeyDown.current = (e: KeyboardEvent) => {
      if (e.code === 'Space' && !isTyping(e.target)) {
        setSpace(true);
        e.preventDefault();
      }
      if (isTyping(e.target) || document.querySelector('[role="dialog"],[role="alertdialog"]')) return;
      const focused = document.activeElement === box.current;
      if (focused && canEdit && tool !== 'select' && !e.ctrlKey && !e.metaKey && !e.altKey && (isArrow(e.key) || (e.key === 'Enter' && kc))) {
        e.preventDefault();
        if (e.key === 'Enter') keyboardPlace(kc!, e.shiftKey);
        else keyboardMove(e.key, e.shiftKey);
        return;
      }
      if (e.key === 'Escape' && (anchor || kTrace)) {
        setAnchor(null);
        setKTrace(null);
        setSaid('Outline cancelled');
      }
      if (draft.length) {
        if (e.key === 'Enter') finishPolygon();
        else if (e.key === 'Escape') (setDraft([]), setSaid('Outline cancelled'));
        else if (e.key === 'Backspace') setDraft((d) => d.slice(0, -1));
      }
    };
    onKeyUp.current = (e: KeyboardEvent) => e.code === 'Space' && setSpace(false);
  }
  useEffect(() => {
    setDraft([]);
    setAnchor(null);
    setKTrace(null);
    if (tool === 'select') setKc(null);
  }, [tool]);

  const keyboardMove = (key: string, fast: boolean) => {
    const p = kc ? moveCursor(kc, key, cursorStep(v.scale, fast), W, H) : startCursor(v, size.w, size.h, W, H);
    setKc(p);
    setView((cur) => followCursor(cur ?? v, p, size.w, size.h));
    if (kTrace) setKTrace((t) => (t ? [...t, p] : t));
  };
  /** Enter at the keyboard cursor: a polygon point (Shift+Enter, or Enter on the first point, closes), a box or ellipse corner, a trace's start or end */
  const keyboardPlace = (p: Point, close: boolean) => {
    if (tool === 'polygon') {
      const [fx, fy] = draft[0] ?? [NaN, NaN];
      if (draft.length >= 3 && (close || Math.hypot((fx - p[0]) * v.scale, (fy - p[1]) * v.scale) < 8)) {
        finishPolygon();
        setSaid('Polygon closed');
      } else {
        setDraft((d) => [...d, p]);
        setSaid(`Point ${draft.length + 1} at x ${p[0]}, y ${p[1]}`);
      }
    } else if (tool === 'box' || tool === 'ellipse') {
      if (!anchor) {
        setAnchor(p);
        setSaid(`First corner at x ${p[0]}, y ${p[1]}; move to the opposite corner and press Enter`);
      } else {
        const g = tool === 'box' ? boxFromDrag(anchor, p) : ellipseFromDrag(anchor, p);
        if (g) dispatch({ type: 'add', geometry: roundGeometry(g), role: newRole });
        setAnchor(null);
        setSaid(g ? `${tool === 'box' ? 'Box' : 'Ellipse'} added` : 'Too small: nothing added');
      }
    } else if (tool === 'trace') {
      if (!kTrace) {
        setKTrace([p]);
        setSaid('Tracing: move around the cell and press Enter to close');
      } else {
        const g = traceFromStroke(kTrace, Math.max(0.5, 2 / v.scale));
        if (g) dispatch({ type: 'add', geometry: g, role: newRole });
        setKTrace(null);
        setSaid(g ? 'Trace closed' : 'Too short: nothing added');
      }
    }
  };

  const finishPolygon = () => {
    const g = polygonFromClicks(draft);
    if (g) dispatch({ type: 'add', geometry: g, role: newRole });
    setDraft([]);
  };

  const local = (e: { clientX: number; clientY: number }) => {
    const r = box.current!.getBoundingClientRect();
    return { sx: e.clientX - r.left, sy: e.clientY - r.top };
  };

  const onPointerDown = (e: RPointerEvent<HTMLDivElement>) => {
    const { sx, sy } = local(e);
    setKc(null);
    setAnchor(null);
    setKTrace(null);
    pointers.current.set(e.pointerId, { x: sx, y: sy });
    box.current?.setPointerCapture(e.pointerId);
    box.current?.focus({ preventScroll: true });
    if (pointers.current.size === 2) {
      // pinch: cancel any drawing, zoom about the midpoint
      const [a, b] = [...pointers.current.values()];
      pinch.current = { d: Math.hypot(a.x - b.x, a.y - b.y), mx: (a.x + b.x) / 2, my: (a.y + b.y) / 2, v };
      setDrag(null);
      return;
    }
    const p = toImage(v, sx, sy);
    const target = e.target as Element;
    const outlineKey = target.closest('[data-outline]')?.getAttribute('data-outline') ?? (tool === 'select' ? labelAt(outlines, p, W, H) : null);
    const handle = target.closest('[data-handle]')?.getAttribute('data-handle');
    if (e.button === 1 || space || (e.button === 0 && tool === 'select' && !outlineKey && !handle)) {
      if (tool === 'select' && !outlineKey && !space && e.button === 0) dispatch({ type: 'select', key: null });
      setDrag({ kind: 'pan', sx, sy, v });
      return;
    }
    if (e.button !== 0) return;
    if (tool === 'select') {
      if (handle && selected && canEdit) {
        const index = Number(handle);
        if (e.shiftKey || e.altKey) {
          dispatch({ type: 'remove-vertex', key: selected, index });
          return;
        }
        setDrag({ kind: 'handle', key: selected, index, started: false });
        return;
      }
      if (outlineKey) {
        dispatch({ type: 'select', key: outlineKey });
        if (canEdit) setDrag({ kind: 'move', key: outlineKey, last: p, started: false });
      }
      return;
    }
    if (!canEdit) return;
    if (tool === 'polygon') {
      if (draft.length >= 3) {
        const [fx, fy] = draft[0];
        if (Math.hypot((fx - p[0]) * v.scale, (fy - p[1]) * v.scale) < 8) {
          finishPolygon();
          return;
        }
      }
      setDraft((d) => [...d, p]);
      return;
    }
    if (tool === 'box' || tool === 'ellipse') setDrag({ kind: 'shape', tool, a: p, b: p });
    else if (tool === 'trace') setDrag({ kind: 'stroke', points: [p] });
  };

  const onPointerMove = (e: RPointerEvent<HTMLDivElement>) => {
    const { sx, sy } = local(e);
    if (pointers.current.has(e.pointerId)) pointers.current.set(e.pointerId, { x: sx, y: sy });
    if (pinch.current && pointers.current.size === 2) {
      const [a, b] = [...pointers.current.values()];
      const d = Math.hypot(a.x - b.x, a.y - b.y);
      const pc = pinch.current;
      const mx = (a.x + b.x) / 2, my = (a.y + b.y) / 2;
      const z = zoomAt(pc.v, d / Math.max(1, pc.d), pc.mx, pc.my);
      setView({ ...z, tx: z.tx + mx - pc.mx, ty: z.ty + my - pc.my });
      return;
    }
    const p = toImage(v, sx, sy);
    setHover(p);
    if (!drag) return;
    switch (drag.kind) {
      case 'pan':
        setView({ ...drag.v, tx: drag.v.tx + sx - drag.sx, ty: drag.v.ty + sy - drag.sy });
        break;
      case 'shape':
        setDrag({ ...drag, b: p });
        break;
      case 'stroke':
        setDrag({ ...drag, points: [...drag.points, p] });
        break;
      case 'move': {
        if (!drag.started) {
          dispatch({ type: 'gesture-start' });
          onGesture?.(true);
        }
        dispatch({ type: 'translate', key: drag.key, dx: p[0] - drag.last[0], dy: p[1] - drag.last[1], live: true });
        setDrag({ ...drag, last: p, started: true });
        break;
      }
      case 'handle': {
        if (!drag.started) {
          dispatch({ type: 'gesture-start' });
          onGesture?.(true);
          setDrag({ ...drag, started: true });
        }
        dispatch({ type: 'move-handle', key: drag.key, index: drag.index, to: [Math.round(p[0] * 100) / 100, Math.round(p[1] * 100) / 100], live: true });
        break;
      }
    }
  };

  const onPointerUp = (e: RPointerEvent<HTMLDivElement>) => {
    pointers.current.delete(e.pointerId);
    if (pointers.current.size < 2) pinch.current = null;
    if (!drag) return;
    if (drag.kind === 'shape') {
      const g = drag.tool === 'box' ? boxFromDrag(drag.a, drag.b) : ellipseFromDrag(drag.a, drag.b);
      if (g) dispatch({ type: 'add', geometry: roundGeometry(g), role: newRole });
    } else if (drag.kind === 'stroke') {
      const g = traceFromStroke(drag.points, Math.max(0.5, 2 / v.scale));
      if (g) dispatch({ type: 'add', geometry: g, role: newRole });
    } else if ((drag.kind === 'move' || drag.kind === 'handle') && drag.started) onGesture?.(false);
    setDrag(null);
  };

  const onDoubleClick = (e: React.MouseEvent<HTMLDivElement>) => {
    if (tool === 'polygon' && draft.length >= 3) {
      // the double click's presses added the same point twice: polygonFromClicks drops repeats
      finishPolygon();
      return;
    }
    if (tool !== 'select' || !selected || !canEdit) return;
    const sel = outlines.find((o) => o.key === selected);
    if (!sel || (sel.geometry.kind !== 'polygon' && sel.geometry.kind !== 'freehand')) return;
    const { sx, sy } = local(e);
    const p = toImage(v, sx, sy);
    dispatch({ type: 'insert-vertex', key: selected, index: nearestEdge(sel.geometry.points, p), at: [Math.round(p[0] * 100) / 100, Math.round(p[1] * 100) / 100] });
  };

  const sel = outlines.find((o) => o.key === selected) ?? null;
  const handleR = 5 / v.scale;
  const bar = field.pixelSizeUm ? scaleBar(field.pixelSizeUm, v.scale) : null;
  const cursor = drag?.kind === 'pan' ? 'grabbing' : space ? 'grab' : tool === 'select' ? 'default' : 'crosshair';
  const draftPreview =
    drag?.kind === 'shape'
      ? drag.tool === 'box'
        ? boxFromDrag(drag.a, drag.b)
        : ellipseFromDrag(drag.a, drag.b)
      : drag?.kind === 'stroke' && drag.points.length > 1
        ? { kind: 'freehand' as const, points: drag.points }
        : anchor && kc
          ? tool === 'box'
            ? boxFromDrag(anchor, kc)
            : ellipseFromDrag(anchor, kc)
          : kTrace && kTrace.length > 1
            ? { kind: 'freehand' as const, points: kTrace }
            : null;
  const next = kc ?? hover;
  const readout = kc ?? hover;
  const kcR = 9 / v.scale;

  return (
    <div
      ref={box}
      tabIndex={0}
      role="application"
      aria-label={`Field image ${field.name}, ${W} × ${H} pixels. Tools: V select, B box, E ellipse, P polygon, T trace. With a tool, arrows move the keyboard cursor and Enter places a point; question mark lists every key.`}
      data-testid="field-viewer"
      data-cursor={kc ? kc.join(',') : undefined}
      className="relative h-full w-full overflow-hidden rounded-md bg-[#14181c] outline-none select-none touch-none focus-visible:ring-2 focus-visible:ring-accent"
      style={{ cursor }}
      onPointerDown={onPointerDown}
      onPointerMove={onPointerMove}
      onPointerUp={onPointerUp}
      onPointerCancel={onPointerUp}
      onPointerLeave={() => setHover(null)}
      onDoubleClick={onDoubleClick}
      onContextMenu={(e) => e.preventDefault()}
    >
      <div className="absolute left-0 top-0 origin-top-left" style={{ width: W, height: H, transform: `translate(${v.tx}px, ${v.ty}px) scale(${v.scale})` }}>
        {(imageOverride ?? img?.src) && (
          <img src={imageOverride ?? img!.src} alt="" draggable={false} data-aligned={imageOverride ? 'true' : undefined} className="absolute inset-0 h-full w-full max-w-none" style={{ imageRendering: v.scale >= 2 ? 'pixelated' : 'auto' }} />
        )}
        <LabelLayer field={field} outlines={outlines} selected={selected} />
        <svg className="absolute inset-0 overflow-visible" width={W} height={H} viewBox={`0 0 ${W} ${H}`}>
          {outlines.map((o) =>
            o.geometry.kind === 'label' || o.geometry.kind === 'label3d' ? null : (
              <path
                key={o.key}
                data-outline={o.key}
                d={pathOf(o.geometry)}
                fill={o.key === selected ? 'rgba(15,118,110,0.18)' : 'rgba(0,0,0,0.001)'}
                fillRule="evenodd"
                stroke={o.key === selected ? SELECT_COLOR : o.role === 'background' ? BG_COLOR : CELL_COLOR}
                strokeWidth={o.key === selected ? 2 : 1.25}
                strokeDasharray={o.role === 'background' ? '6 4' : undefined}
                vectorEffect="non-scaling-stroke"
                style={{ cursor: tool === 'select' ? (canEdit ? 'move' : 'pointer') : undefined }}
              >
                <title>{o.name}</title>
              </path>
            ),
          )}
          {overlay}
          {marker && (
            <g data-testid="section-marker" pointerEvents="none">
              <line x1={0} x2={W} y1={marker[1] + 0.5} y2={marker[1] + 0.5} stroke="#facc15" strokeWidth={1 / v.scale} strokeDasharray={`${4 / v.scale} ${4 / v.scale}`} />
              <line x1={marker[0] + 0.5} x2={marker[0] + 0.5} y1={0} y2={H} stroke="#facc15" strokeWidth={1 / v.scale} strokeDasharray={`${4 / v.scale} ${4 / v.scale}`} />
            </g>
          )}
          {sel && tool === 'select' && canEdit && handlesVisible(sel, v.scale) &&
            handlesOf(sel.geometry).map(([x, y], i) => (
              <circle key={i} data-handle={i} cx={x} cy={y} r={handleR} fill="#fff" stroke={SELECT_COLOR} strokeWidth={1.5} vectorEffect="non-scaling-stroke" style={{ cursor: 'pointer' }} />
            ))}
          {draftPreview && <path d={pathOf(draftPreview)} fill="rgba(15,118,110,0.15)" stroke={SELECT_COLOR} strokeWidth={1.5} vectorEffect="non-scaling-stroke" />}
          {draft.length > 0 && (
            <>
              <polyline points={[...draft, ...(next ? [next] : [])].map((p) => p.join(',')).join(' ')} fill="none" stroke={SELECT_COLOR} strokeWidth={1.5} strokeDasharray="4 3" vectorEffect="non-scaling-stroke" />
              {draft.map(([x, y], i) => (
                <circle key={i} cx={x} cy={y} r={i === 0 ? handleR * 1.2 : handleR * 0.7} fill={i === 0 ? SELECT_COLOR : '#fff'} stroke={SELECT_COLOR} strokeWidth={1} vectorEffect="non-scaling-stroke" />
              ))}
            </>
          )}
          {kc && (
            <g data-testid="keyboard-cursor" pointerEvents="none">
              <line x1={kc[0] - kcR} x2={kc[0] + kcR} y1={kc[1]} y2={kc[1]} stroke="#000" strokeWidth={3.5} vectorEffect="non-scaling-stroke" />
              <line x1={kc[0]} x2={kc[0]} y1={kc[1] - kcR} y2={kc[1] + kcR} stroke="#000" strokeWidth={3.5} vectorEffect="non-scaling-stroke" />
              <line x1={kc[0] - kcR} x2={kc[0] + kcR} y1={kc[1]} y2={kc[1]} stroke="#fde047" strokeWidth={1.5} vectorEffect="non-scaling-stroke" />
              <line x1={kc[0]} x2={kc[0]} y1={kc[1] - kcR} y2={kc[1] + kcR} stroke="#fde047" strokeWidth={1.5} vectorEffect="non-scaling-stroke" />
              {anchor && <circle cx={anchor[0]} cy={anchor[1]} r={handleR * 0.8} fill="#fde047" stroke="#000" strokeWidth={1} vectorEffect="non-scaling-stroke" />}
            </g>
          )}
        </svg>
      </div>
      <span className="sr-only" aria-live="polite">
        {said}
      </span>

      {!img && !imgError && <div className="absolute inset-0 grid place-items-center text-sm text-white/70">Loading image…</div>}
      {imgError && <div role="alert" className="absolute left-3 top-3 rounded bg-danger-soft px-3 py-2 text-sm text-danger">{imgError}</div>}

      <div className="pointer-events-none absolute bottom-2 left-2 flex items-end gap-3 text-xs text-white/85">
        {bar && (
          <div data-testid="scale-bar" className="flex flex-col items-start">
            <div className="h-1.5 bg-white" style={{ width: bar.px }} />
            <span className="mt-0.5 font-mono">{bar.um} µm</span>
          </div>
        )}
        {sel && tool === 'select' && canEdit && !handlesVisible(sel, v.scale) && <span>zoom in to edit the points of {sel.name}</span>}
        <span className="font-mono">
          {Math.round(v.scale * 1000) / 10}%{readout && readout[0] >= 0 && readout[1] >= 0 && readout[0] <= W && readout[1] <= H ? ` · x ${Math.floor(readout[0])}, y ${Math.floor(readout[1])}` : ''}
        </span>
      </div>
      {(draft.length > 0 || kc) && (
        <div className="pointer-events-none absolute left-1/2 top-2 -translate-x-1/2 rounded bg-black/70 px-3 py-1 text-xs text-white">
          {kc
            ? `${tool === 'polygon' ? `${plural(draft.length, 'point')} · Enter places a point · Shift+Enter closes` : tool === 'trace' ? (kTrace ? 'tracing · Enter closes' : 'Enter starts a trace') : anchor ? 'Enter places the opposite corner' : 'Enter places the first corner'} · arrows move (Shift: faster) · Esc cancels · ? all keys`
            : `${plural(draft.length, 'point')} · click the first point, double-click or press Enter to close · Esc cancels`}
        </div>
      )}
      <div className="absolute bottom-2 right-2 flex gap-1" onPointerDown={(e) => e.stopPropagation()}>
        {(
          [
            ['out', '−', 'Zoom out (−)'],
            ['in', '+', 'Zoom in (+)'],
            ['fit', 'Fit', 'Fit to window (0)'],
            ['one', '1:1', '1:1, one image pixel per screen pixel (1)'],
          ] as const
        ).map(([k, label, title]) => (
          <button key={k} type="button" title={title} aria-label={title} onClick={() => applyCommand(k)} className={cx('rounded bg-black/55 px-2 py-1 text-xs font-medium text-white hover:bg-black/75')}>
            {label}
          </button>
        ))}
      </div>
    </div>
  );
}

/**
 * Vertex handles are shown when they are at least ~6 screen pixels apart on average (traced automatic
 * outlines have a vertex at every pixel corner: zoom in to edit them).
 */
function handlesVisible(o: Outline, scale: number): boolean {
  const hs = handlesOf(o.geometry);
  if (hs.length <= 8) return true;
  let len = 0;
  for (let i = 0; i < hs.length; i++) {
    const a = hs[i], b = hs[(i + 1) % hs.length];
    len += Math.hypot(a[0] - b[0], a[1] - b[1]);
  }
  return (len / hs.length) * scale >= 6;
}

/** The label-image cell whose pixels include the pixel under p. */
function labelAt(outlines: Outline[], p: Point, W: number, H: number): string | null {
  const x = Math.floor(p[0]), y = Math.floor(p[1]);
  if (x < 0 || y < 0 || x >= W || y >= H) return null;
  const i = y * W + x;
  for (const o of outlines) {
    if (o.geometry.kind !== 'label') continue;
    if (runsContain(o.geometry.rle, i)) return o.key;
  }
  return null;
}

function roundGeometry<T>(g: T): T {
  const r = (x: number) => Math.round(x * 100) / 100;
  const o = { ...(g as Record<string, unknown>) };
  for (const k of ['x', 'y', 'width', 'height', 'cx', 'cy', 'rx', 'ry']) if (typeof o[k] === 'number') o[k] = r(o[k] as number);
  return o as T;
}

export function isTyping(t: EventTarget | null) {
  const el = t as HTMLElement | null;
  return !!el && (el.tagName === 'INPUT' || el.tagName === 'TEXTAREA' || el.tagName === 'SELECT' || el.isContentEditable);
}
