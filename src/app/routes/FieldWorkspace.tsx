/**
 * Route module: the field workspace (/studies/:studyId/fields/:fieldId). The image with its outlines, the
 * Cells list, the Pixel scatter with live coefficients (preview), per-cell results, the Spots panel (the
 * latest run's spots drawn over the image, or live detection at the sliders' σ and k), the channel alignment
 * (curves and the composite with alignment on/off, drawn by the pixel worker), the field's instrument (a
 * choice for editors, text in the header for everyone else) and the cautions.
 * Keys: V P B O F tools · M background mode · Ctrl+Z / Ctrl+Shift+Z undo/redo · Delete removes the selected
 * outline · arrows nudge it (Shift: 10 px) · + − 0 1 zoom · Esc deselects.
 */
import { useCallback, useEffect, useMemo, useReducer, useRef, useState } from 'react';
import { useParams } from 'react-router';
import { Button, Caution, ErrorNotice, Loading, PageHeader } from '@/components';
import { FieldInstrument, PixelSizeEditor, ZStepEditor, useField } from '@/features/fields';
import { useStudy } from '@/features/studies';
import { useCells } from '@/features/workspace';
import { useFieldPixels } from '@/features/fields';
import { useFieldResults } from '@/features/workspace';
import { initialOutlineState, outlineReducer } from '@/features/workspace';
import { useOutlineSync } from '@/features/workspace';
import { useScatter, ScatterOver, volumeFits, wholeFieldIn3d, VOLUME_PREVIEW_MAX_BYTES, type StreamSource, type VolumeSource } from '@/features/workspace';
import { Viewer, isTyping, type DisplaySettings, type Tool } from '@/features/workspace';
import { ToolBar, TOOLS, ShortcutHelp } from '@/features/workspace';
import { CellsPanel } from '@/features/workspace';
import { DisplayPanel, channelNames } from '@/features/workspace';
import { PixelScatter } from '@/features/workspace';
import { LivePreview } from '@/features/workspace';
import { ResultsTable } from '@/features/workspace';
import { AutoOutlineDialog, ImportLabelsDialog, ImportOutlinesDialog } from '@/features/workspace';
import { AlignmentPanel, useCompositeUrl } from '@/features/workspace';
import { OrthoViews } from '@/features/workspace';
import { SpotLayer, SpotsPanel, pairsWithin, useFieldSpots, type LiveSpotSettings, type SpotPair, type SpotToggles, type Xy } from '@/features/workspace';
import { OBJECT_DEFAULTS } from '@shared/analysis/objects';
import { cellIndices } from '@shared/schemas/cells';
import { ApiError, downloadFile } from '@/lib/api';
import { Component as NotFound } from './NotFound';
import { plural } from '@shared/format/plural';

export function Component() {
  const params = useParams();
  const studyId = Number(params.studyId);
  const fieldId = Number(params.fieldId);
  const field = useField(fieldId);
  if (!Number.isInteger(fieldId) || fieldId <= 0) return <NotFound />;
  if (field.isPending) return <Loading label="Opening the field…" />;
  if (field.isError) return field.error instanceof ApiError && field.error.status === 404 ? <NotFound /> : <ErrorNotice error={field.error} />;
  return <Workspace key={fieldId} studyId={studyId} field={field.data} />;
}

function Workspace({ studyId, field }: { studyId: number; field: NonNullable<ReturnType<typeof useField>['data']> }) {
  const fieldId = field.id;
  const canEdit = field.canEdit;
  const names = channelNames(field);
  const cells = useCells(fieldId);
  const results = useFieldResults(studyId, fieldId);
  const study = useStudy(studyId);
  const [state, dispatch] = useReducer(outlineReducer, undefined, () => initialOutlineState());
  const [tool, setTool] = useState<Tool>(canEdit ? 'polygon' : 'select');
  const [background, setBackground] = useState(false);
  const [gesture, setGesture] = useState(false);
  const [display, setDisplay] = useState<DisplaySettings>({ view: 'composite', z: undefined, range1: null, range2: null });
  const [autoRanges, setAutoRanges] = useState<[number, number][] | null>(null);
  const [command, setCommand] = useState<{ kind: 'fit' | 'one' | 'in' | 'out'; n: number } | null>(null);
  const [dialog, setDialog] = useState<null | 'labels' | 'outlines' | 'auto' | 'keys'>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [manual, setManual] = useState<{ t1: number; t2: number } | null>(null);
  const loaded = useRef(false);
  // orthogonal views (stacks): the point they pass through, typed, picked on a view or following the cursor
  const stack = field.sizeZ > 1;
  const [point, setPoint] = useState<[number, number]>(() => [Math.floor(field.width / 2), Math.floor(field.height / 2)]);
  const [follow, setFollow] = useState(false);
  const cursorTimer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const onCursor = useCallback(
    (p: [number, number] | null) => {
      if (!follow || !p) return;
      const x = Math.floor(p[0]), y = Math.floor(p[1]);
      if (x < 0 || y < 0 || x >= field.width || y >= field.height) return;
      // at most one new pair of sections every 150 ms while the cursor moves
      if (cursorTimer.current) clearTimeout(cursorTimer.current);
      cursorTimer.current = setTimeout(() => setPoint((cur) => (cur[0] === x && cur[1] === y ? cur : [x, y])), 150);
    },
    [follow, field.width, field.height],
  );
  useEffect(() => () => void (cursorTimer.current && clearTimeout(cursorTimer.current)), []);
  const orthoRanges = useMemo<[[number, number] | null, [number, number] | null]>(
    () => [display.range1 ?? autoRanges?.[0] ?? null, display.range2 ?? autoRanges?.[1] ?? null],
    [display.range1, display.range2, autoRanges],
  );

  useEffect(() => {
    if (cells.data) {
      dispatch({ type: 'load', cells: cells.data.cells });
      loaded.current = true;
    }
  }, [cells.data]);

  const sync = useOutlineSync(fieldId, state, dispatch, gesture, canEdit && !!cells.data);

  // pixels for the scatter and the live preview (the slice the display shows)
  const pixels = useFieldPixels(fieldId, display.z);
  const saturationLevel = field.sampleFormat === 'float' ? null : 2 ** field.bitDepth - 1;
  const sliceScatter = useScatter(pixels.data, saturationLevel);
  const selectedOutline = state.outlines.find((o) => o.key === state.selected) ?? null;
  // on a stack the scatter and live preview cover every slice (as runs measure by default): the whole volume
  // when it fits the browser (lib/volumePreview.ts), else the selected cell's voxels read slice by slice
  const volumeOk = volumeFits(field);
  const [over, setOver] = useState<'volume' | 'slice'>(stack && volumeOk ? 'volume' : 'slice');
  const wantVolume = stack && over === 'volume';
  const streamed = useRef<{ key: string; source: StreamSource } | null>(null);
  if (wantVolume && !volumeOk && selectedOutline && !gesture) {
    const key = `${selectedOutline.key}:${hashGeometry(selectedOutline.geometry)}`;
    if (streamed.current?.key !== key)
      streamed.current = { key, source: { kind: 'stream', fieldId, width: field.width, height: field.height, depth: field.sizeZ, geometry: selectedOutline.geometry, maxBytes: VOLUME_PREVIEW_MAX_BYTES } };
  } else if (!wantVolume || volumeOk || !selectedOutline) streamed.current = null;
  const inVolume = wantVolume && (volumeOk ? !!selectedOutline || wholeFieldIn3d(field) : !!streamed.current);
  const volumeSource = useMemo<VolumeSource | undefined>(() => (wantVolume && volumeOk ? { kind: 'volume', fieldId, width: field.width, height: field.height, depth: field.sizeZ } : undefined), [wantVolume, volumeOk, fieldId, field.width, field.height, field.sizeZ]);
  const volumeScatter = useScatter(volumeSource ?? streamed.current?.source, saturationLevel);
  const scatter = inVolume ? volumeScatter : sliceScatter;
  // the whole field's default thresholds are computed over the outlined cells (scatterBasis.ts): its key follows them
  const cellGeometries = useMemo(() => state.outlines.filter((o) => o.role === 'cell').map((o) => o.geometry), [state.outlines]);
  const cellsKey = useMemo(() => hashGeometry(cellGeometries), [cellGeometries]);
  const regionKey = `${inVolume ? 'volume' : 'slice'}:${selectedOutline ? `${selectedOutline.key}:${hashGeometry(selectedOutline.geometry)}` : `field:${cellsKey}`}`;
  const regionName = `${selectedOutline ? selectedOutline.name : 'the whole field'}${inVolume ? ' (every slice, 3D)' : ''}`;
  const geometry = selectedOutline?.geometry ?? null;
  useEffect(() => {
    if (!scatter.ready || gesture) return;
    scatter.request(regionKey, geometry, manual?.t1 ?? null, manual?.t2 ?? null, true, cellGeometries);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [scatter.ready, regionKey, gesture, manual]);
  const onThresholds = useCallback((t1: number, t2: number) => scatter.request(regionKey, geometry, t1, t2, false, cellGeometries), [scatter, regionKey, geometry, cellGeometries]);
  const onThresholdsDone = useCallback((t1: number, t2: number) => setManual({ t1, t2 }), []);

  // the main image with channel 2 aligned (the alignment panel's switch): drawn by the pixel worker at the shown
  // intensities. Composites are 2-D views of the shown slice, so they always come from the slice's worker, even
  // while the scatter covers the whole volume (that worker refuses them: lib/composite.ts compositePlane)
  const [viewerShift, setViewerShift] = useState<{ dx: number; dy: number } | null>(null);
  const r1 = display.range1 ?? autoRanges?.[0] ?? null;
  const r2 = display.range2 ?? autoRanges?.[1] ?? null;
  const alignMain = !!viewerShift && display.view === 'composite' && !!r1 && !!r2;
  useEffect(() => {
    if (alignMain && sliceScatter.ready) sliceScatter.requestComposite(viewerShift, 'viewer', [r1!, r2!]);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [alignMain, sliceScatter.ready, viewerShift?.dx, viewerShift?.dy, r1?.[0], r1?.[1], r2?.[0], r2?.[1]]);
  const viewerComposite = sliceScatter.composites.viewer;
  const alignedImage = useCompositeUrl(alignMain && viewerComposite && viewerComposite.shift?.dx === viewerShift?.dx && viewerComposite.shift?.dy === viewerShift?.dy ? viewerComposite : null);

  // spots: the latest run's (stored per cell), or live detection in the worker at the sliders' σ and k
  const runId = results.data?.source?.runId ?? results.data?.rows.find((r) => r.runId !== null)?.runId ?? null;
  const fieldSpots = useFieldSpots(runId, fieldId);
  const [spotToggles, setSpotToggles] = useState<SpotToggles>({ ch1: true, ch2: true, pairs: true });
  const [liveSpots, setLiveSpots] = useState<LiveSpotSettings>({ on: false, sigma: OBJECT_DEFAULTS.spotSigma, k: OBJECT_DEFAULTS.spotK });
  useEffect(() => {
    if (!sliceScatter.ready || !liveSpots.on || gesture) return;
    sliceScatter.requestSpots(regionKey, geometry, liveSpots.sigma, liveSpots.k);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [sliceScatter.ready, liveSpots, regionKey, gesture]);
  const stored = fieldSpots.data?.settings;
  const pairDistancePx = stored?.pairDistancePx ?? OBJECT_DEFAULTS.pairDistance;
  const livePreviewSpots = liveSpots.on && sliceScatter.spots && sliceScatter.spots.regionKey === regionKey ? sliceScatter.spots : null;
  const shownSpots = useMemo(() => {
    // per cell: spots and pairs within d (pairs never cross cells, as in the run)
    if (liveSpots.on) {
      if (!livePreviewSpots) return null;
      const { pairs } = pairsWithin(livePreviewSpots.spots1, livePreviewSpots.spots2, pairDistancePx);
      return { spots1: livePreviewSpots.spots1, spots2: livePreviewSpots.spots2, pairs, byCell: null };
    }
    const rows = fieldSpots.data?.spots;
    if (!rows?.length) return null;
    const byCell = new Map<number, { spots1: Xy[]; spots2: Xy[] }>();
    for (const s of rows) {
      let c = byCell.get(s.cellId);
      if (!c) byCell.set(s.cellId, (c = { spots1: [], spots2: [] }));
      (s.channel === 1 ? c.spots1 : c.spots2).push([s.x, s.y]);
    }
    // spots found in 3D (with z, in slices): the image shows those of the slice displayed (all on a projection),
    // pairs drawn among them; the cell panel keeps every spot of the cell. No slice chosen yet: the middle
    // slice, the one the image and the slice selector show (as OrthoViews)
    const slice = typeof display.z === 'number' ? display.z : display.z === undefined ? Math.floor((field.sizeZ - 1) / 2) : null;
    const onSlice = new Map<number, { spots1: Xy[]; spots2: Xy[] }>();
    for (const s of rows) {
      if (s.z !== undefined && slice !== null && Math.floor(s.z) !== slice) continue;
      let c = onSlice.get(s.cellId);
      if (!c) onSlice.set(s.cellId, (c = { spots1: [], spots2: [] }));
      (s.channel === 1 ? c.spots1 : c.spots2).push([s.x, s.y]);
    }
    const pairs: SpotPair[] = [];
    for (const c of onSlice.values()) pairs.push(...pairsWithin(c.spots1, c.spots2, pairDistancePx).pairs);
    return { spots1: [...onSlice.values()].flatMap((c) => c.spots1), spots2: [...onSlice.values()].flatMap((c) => c.spots2), pairs, byCell };
  }, [liveSpots.on, livePreviewSpots, fieldSpots.data, pairDistancePx, display.z, field.sizeZ]);
  const spotRadius = 1.414 * (liveSpots.on ? liveSpots.sigma : (stored?.sigmaPx ?? OBJECT_DEFAULTS.spotSigma));

  // keyboard
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (isTyping(e.target) || document.querySelector('[role="dialog"],[role="alertdialog"]')) return;
      const mod = e.ctrlKey || e.metaKey;
      const k = e.key.toLowerCase();
      if (mod && k === 'z') {
        e.preventDefault();
        dispatch({ type: e.shiftKey ? 'redo' : 'undo' });
        return;
      }
      if (mod && k === 'y') {
        e.preventDefault();
        dispatch({ type: 'redo' });
        return;
      }
      if (mod || e.altKey) return;
      if (e.key === '?') return setDialog('keys');
      const t = TOOLS.find((x) => x.key.toLowerCase() === k);
      if (t && (canEdit || t.tool === 'select')) return setTool(t.tool);
      if (k === 'm' && canEdit) return setBackground((b) => !b);
      if (e.key === '+' || e.key === '=') return setCommand((c) => ({ kind: 'in', n: (c?.n ?? 0) + 1 }));
      if (e.key === '-') return setCommand((c) => ({ kind: 'out', n: (c?.n ?? 0) + 1 }));
      if (e.key === '0') return setCommand((c) => ({ kind: 'fit', n: (c?.n ?? 0) + 1 }));
      if (e.key === '1') return setCommand((c) => ({ kind: 'one', n: (c?.n ?? 0) + 1 }));
      if (e.key === 'Escape' && state.selected) return dispatch({ type: 'select', key: null });
      if ((e.key === 'Delete' || e.key === 'Backspace') && state.selected && canEdit && tool === 'select') {
        e.preventDefault();
        return dispatch({ type: 'delete', key: state.selected });
      }
      // with a drawing tool the arrows move the viewer's keyboard cursor instead (Viewer)
      if (e.key.startsWith('Arrow') && state.selected && canEdit && tool === 'select' && (e.target as HTMLElement)?.dataset?.testid === 'field-viewer') {
        e.preventDefault();
        const d = e.shiftKey ? 10 : 1;
        const dx = e.key === 'ArrowLeft' ? -d : e.key === 'ArrowRight' ? d : 0;
        const dy = e.key === 'ArrowUp' ? -d : e.key === 'ArrowDown' ? d : 0;
        dispatch({ type: 'translate', key: state.selected, dx, dy });
      }
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [canEdit, state.selected, tool]);

  const savedCells = useMemo(() => Object.values(state.saved).sort((a, b) => a.id - b.id), [state.saved]);
  const selectedCellId = state.selected ? (state.saved[state.selected]?.id ?? null) : null;
  const live = scatter.live;
  const liveStale = !!scatter.live && (scatter.live.regionKey !== regionKey || (!!scatter.view && (scatter.view.t1 !== scatter.live.t1 || scatter.view.t2 !== scatter.live.t2)));
  const selectedRow = selectedCellId !== null ? results.data?.rows.find((r) => r.cellId === selectedCellId) : undefined;
  const selectedSpots =
    selectedOutline && selectedOutline.role === 'cell'
      ? liveSpots.on
        ? livePreviewSpots && { spots1: livePreviewSpots.spots1, spots2: livePreviewSpots.spots2 }
        : selectedCellId !== null
          ? (shownSpots?.byCell?.get(selectedCellId) ?? { spots1: [], spots2: [] })
          : null
      : null;
  const spotCell =
    selectedOutline && selectedSpots
      ? { name: selectedOutline.name, row: selectedRow, ...selectedSpots, areaPx: selectedRow?.pixels ?? cellIndices(selectedOutline.geometry, field.width, field.height).length }
      : null;
  const regionSaturated = scatter.view && scatter.view.regionKey === regionKey ? (scatter.view.saturated.ch1 ?? 0) > 0 || (scatter.view.saturated.ch2 ?? 0) > 0 : false;

  const status =
    sync.status.kind === 'error' ? (
      <span className="text-danger" role="alert">
        Not saved: {sync.status.message}
      </span>
    ) : sync.busy || sync.status.kind === 'saving' ? (
      'Saving…'
    ) : sync.status.kind === 'saved' ? (
      'All changes saved'
    ) : canEdit ? (
      'Outlines save as you draw'
    ) : (
      'Read only'
    );

  return (
    <div className="flex flex-col">
      <PageHeader
        title={field.name}
        trail={[
          { to: '/studies', label: 'Studies' },
          { to: `/studies/${studyId}`, label: study.data?.name ?? 'Study' },
        ]}
        description={
          <>
            {`${field.width} × ${field.height} px · ${field.bitDepth}-bit${field.sizeZ > 1 ? ` · ${field.sizeZ} z slices` : ''} · `}
            <PixelSizeEditor fieldId={fieldId} pixelSizeUm={field.pixelSizeUm} canEdit={canEdit} />
            {field.sizeZ > 1 && (
              <>
                {' · '}
                <ZStepEditor fieldId={fieldId} zStepUm={field.zStepUm} canEdit={canEdit} />
              </>
            )}
            {` · ${names[0]} and ${names[1]}`}
            {!canEdit && <span data-testid="field-instrument-text">{` · ${field.instrumentName ? `recorded on ${field.instrumentName}` : 'instrument not given'}`}</span>}
          </>
        }
        actions={
          <>
            <a className="rounded-md border border-ink/20 bg-white px-2.5 py-1 text-sm font-medium hover:bg-ink/5" href={`/api/fields/${fieldId}/cells.geojson`} download>
              Outlines (GeoJSON)
            </a>
            <Button onClick={() => downloadFile(`/fields/${fieldId}/cells/labels.tiff`, `${field.name}-labels.tiff`).catch((e: Error) => setNotice(e.message))}>Label image (TIFF)</Button>
            {canEdit && (
              <>
                <Button onClick={() => setDialog('labels')}>Import label image</Button>
                <Button onClick={() => setDialog('outlines')}>Import outlines…</Button>
                <Button onClick={() => setDialog('auto')}>Find cells…</Button>
              </>
            )}
          </>
        }
      />
      {notice && (
        <Caution tone="info" className="mb-3">
          {notice}{' '}
          <button type="button" className="ml-2 underline" onClick={() => setNotice(null)}>
            dismiss
          </button>
        </Caution>
      )}
      <div className="grid gap-4 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="min-w-0 space-y-3">
          <ToolBar
            tool={tool}
            onTool={setTool}
            canEdit={canEdit}
            canUndo={state.past.length > 0}
            canRedo={state.future.length > 0}
            onUndo={() => dispatch({ type: 'undo' })}
            onRedo={() => dispatch({ type: 'redo' })}
            background={background}
            onBackground={setBackground}
            status={status}
            onHelp={() => setDialog('keys')}
            statusTitle={sync.status.kind === 'error' ? `Not saved: ${sync.status.message}` : undefined}
          />
          <div className="h-[68vh] min-h-[420px]">
            <Viewer
              field={field}
              display={display}
              outlines={state.outlines}
              selected={state.selected}
              tool={tool}
              canEdit={canEdit}
              newRole={background ? 'background' : 'cell'}
              dispatch={dispatch}
              onAutoRanges={setAutoRanges}
              onGesture={setGesture}
              command={command}
              imageOverride={alignMain ? alignedImage : null}
              onCursor={stack ? onCursor : undefined}
              marker={stack ? point : null}
              overlay={
                shownSpots && (
                  <SpotLayer spots1={spotToggles.ch1 ? shownSpots.spots1 : null} spots2={spotToggles.ch2 ? shownSpots.spots2 : null} pairs={spotToggles.pairs ? shownSpots.pairs : null} radius={spotRadius} />
                )
              }
            />
          </div>
          {stack && (
            <section aria-labelledby="ortho-heading" className="rounded-md border border-ink/10 bg-white/70 p-3">
              <h2 id="ortho-heading" className="mb-2 text-base font-semibold">
                Orthogonal views
              </h2>
              <OrthoViews
                field={field}
                display={display}
                ranges={orthoRanges}
                point={point}
                onPoint={setPoint}
                follow={follow}
                onFollow={setFollow}
                outlines={state.outlines}
                selected={state.selected}
                onSlice={(k) => setDisplay((d) => ({ ...d, z: k }))}
              />
            </section>
          )}
          <div className="grid gap-4 lg:grid-cols-[18rem_minmax(0,1fr)]">
            <section aria-label="Display" className="rounded-md border border-ink/10 bg-white/70 p-3">
              <h2 className="mb-2 text-sm font-semibold">Display</h2>
              <DisplayPanel field={field} display={display} onChange={setDisplay} autoRanges={autoRanges} />
            </section>
            <div className="rounded-md border border-ink/10 bg-white/70 p-3">
              <ResultsTable
                results={results.data}
                loadError={results.isError}
                cells={savedCells}
                selectedCellId={selectedCellId}
                fieldSaturated={field.saturated}
                onSelect={(id) => dispatch({ type: 'select', key: Object.entries(state.saved).find(([, c]) => c.id === id)?.[0] ?? null })}
              />
            </div>
          </div>
        </div>
        <aside className="space-y-3" aria-label="Cells and measurements">
          <section className="rounded-md border border-ink/10 bg-white/70 p-3">
            <div className="mb-1 flex items-center justify-between">
              <h2 className="text-base font-semibold">Cells</h2>
              <span className="text-xs text-ink-soft">{plural(state.outlines.filter((o) => o.role === 'cell').length, 'cell')} · {plural(state.outlines.filter((o) => o.role === 'background').length, 'background region')}</span>
            </div>
            <div className="max-h-64 overflow-auto">
              {cells.isPending ? <Loading label="Loading cells…" /> : cells.isError ? <ErrorNotice error={cells.error} /> : <CellsPanel outlines={state.outlines} saved={state.saved} selected={state.selected} dispatch={dispatch} canEdit={canEdit} unsaved={sync.pending} pixelSizeUm={field.pixelSizeUm} sizeZ={field.sizeZ} />}
            </div>
          </section>
          <section className="rounded-md border border-ink/10 bg-white/70 p-3" aria-label="Pixel scatter">
            <h2 className="mb-1 text-base font-semibold">Pixel scatter</h2>
            {stack && <ScatterOver field={field} over={wantVolume ? 'volume' : 'slice'} onOver={setOver} progress={wantVolume ? volumeScatter.progress : null} cellChosen={!!selectedOutline} />}
            {pixels.isError && !inVolume ? (
              <ErrorNotice error={pixels.error} />
            ) : scatter.error ? (
              <ErrorNotice error={scatter.error} />
            ) : (
              <PixelScatter
                data={scatter.view}
                names={names}
                regionName={regionName}
                onThresholds={onThresholds}
                onThresholdsDone={onThresholdsDone}
                onReset={() => setManual(null)}
                manual={!!manual}
                unit={inVolume ? 'voxel' : 'pixel'}
              />
            )}
          </section>
          <section className="rounded-md border border-ink/10 bg-white/70 p-3">
            {(pixels.isError && !inVolume) || scatter.error ? (
              <section aria-label="Live coefficients (preview)" data-testid="live-preview">
                <h3 className="mb-2 text-sm font-semibold">Coefficients of {regionName}</h3>
                <ErrorNotice error={(inVolume ? null : pixels.error) ?? scatter.error} />
              </section>
            ) : (
              <LivePreview result={live?.result ?? null} regionName={regionName} t1={live?.t1 ?? 0} t2={live?.t2 ?? 0} ms={live?.ms ?? 0} pending={(!inVolume && !!pixels.isPending) || !scatter.live} stale={liveStale} unit={inVolume ? 'voxel' : 'pixel'} />
            )}
          </section>
          <section className="rounded-md border border-ink/10 bg-white/70 p-3">
            <SpotsPanel
              names={names}
              toggles={spotToggles}
              onToggles={setSpotToggles}
              live={liveSpots}
              onLive={setLiveSpots}
              preview={livePreviewSpots && { count1: livePreviewSpots.spots1.length, count2: livePreviewSpots.spots2.length, paired1: shownSpots?.pairs.length ?? 0, ms: livePreviewSpots.ms, regionName }}
              previewError={sliceScatter.spotsError}
              stored={fieldSpots.isSuccess ? stored : undefined}
              runId={runId}
              cell={spotCell}
              pairDistancePx={pairDistancePx}
              pixelSizeUm={field.pixelSizeUm}
            />
          </section>
          <section className="rounded-md border border-ink/10 bg-white/70 p-3" aria-labelledby="field-alignment-heading">
            <h2 id="field-alignment-heading" className="mb-1 text-base font-semibold">
              Channel alignment
            </h2>
            {pixels.isError ? <ErrorNotice error={pixels.error} /> : <AlignmentPanel field={field} drawer={sliceScatter} onMainImage={setViewerShift} mainImageComposite={display.view === 'composite'} />}
          </section>
          {canEdit && (
            <section className="rounded-md border border-ink/10 bg-white/70 p-3" aria-labelledby="field-instrument-heading">
              <h2 id="field-instrument-heading" className="mb-1 text-base font-semibold">
                Instrument
              </h2>
              <FieldInstrument fieldId={fieldId} instrumentId={field.instrumentId} />
            </section>
          )}
          <div className="space-y-2" aria-label="Cautions">
            {(field.saturated || regionSaturated) && (
              <Caution title="Saturated pixels present">
                {regionSaturated ? `${regionName} has pixels at the detector's ceiling` : 'This field has pixels at the ceiling or a clipping plateau'}; clipped intensities bias every coefficient. Flagged in results and reports.
              </Caution>
            )}
            <Caution tone="info" title="What these numbers mean">
              Shown intensities and the view change only the picture, never the numbers. Co-localization at light-microscope resolution (about 200 nm) shows that two labels share the same places, not that the molecules interact.
              Saturated pixels, channel bleed-through, chromatic shift and unequal image adjustment all bias the coefficients. Research use only; not for diagnosis.
            </Caution>
          </div>
        </aside>
      </div>
      <ShortcutHelp open={dialog === 'keys'} onClose={() => setDialog(null)} />
      <ImportLabelsDialog fieldId={fieldId} open={dialog === 'labels'} onClose={() => setDialog(null)} size={[field.width, field.height]} onDone={setNotice} />
      <ImportOutlinesDialog fieldId={fieldId} open={dialog === 'outlines'} onClose={() => setDialog(null)} onDone={setNotice} />
      <AutoOutlineDialog fieldId={fieldId} open={dialog === 'auto'} onClose={() => setDialog(null)} names={names} onDone={setNotice} z={display.z} facts={field.facts} size={[field.width, field.height]} pixelSizeUm={field.pixelSizeUm} />
    </div>
  );
}

/** A short signature of a geometry (region cache key in the worker). */
function hashGeometry(g: unknown): string {
  const s = JSON.stringify(g);
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 16777619);
  return (h >>> 0).toString(36) + s.length;
}
