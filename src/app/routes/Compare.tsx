/** Route module: Compare — one coefficient across the study's conditions, coverslips as replicates. */
import { useEffect } from 'react';
import { useParams, useSearchParams } from 'react-router';
import { PageHeader, Loading, ErrorNotice, EmptyState, ButtonLink, MeasurementCautions, inputClass, BoxMessage, useNumberBox } from '@/components';
import { useStudy } from '@/features/studies';
import { SourceSelect } from '@/features/cell-table';
import { useComparison } from '@/features/compare';
import { ComparePanel } from '@/features/compare';
import { COMPARE_COEFFICIENTS, CompareQuery } from '@shared/schemas/compare';
import { labelOf } from '@shared/coefficients';
import { NumberTextFor } from '@shared/schemas/common';
import { ApiError } from '@/lib/api';
import { Component as NotFound } from './NotFound';

export function Component() {
  const studyId = Number(useParams().studyId);
  const [params, setParams] = useSearchParams();
  const study = useStudy(studyId);
  const q = new URLSearchParams();
  q.set('coefficient', params.get('coefficient') ?? 'pearson');
  for (const k of ['recipeId', 'runId', 'seed']) if (params.get(k)) q.set(k, params.get(k)!);
  const cmp = useComparison(studyId, q);
  const set = (k: string, v: string) => {
    const next = new URLSearchParams(params);
    if (v) next.set(k, v);
    else next.delete(k);
    setParams(next, { replace: true });
  };
  // an unpinned page pins the recipe version it was computed from, so the URL (bookmarked, shared, reloaded,
  // or the CSV links) keeps showing these measurements after another recipe runs on the study
  const followed = cmp.data?.source;
  const unpinned = !params.get('recipeId') && !params.get('runId');
  useEffect(() => {
    if (!unpinned || followed?.kind !== 'recipe' || followed.pinned !== false || followed.recipeId === null) return;
    const next = new URLSearchParams(params);
    next.set('recipeId', String(followed.recipeId));
    setParams(next, { replace: true });
  }, [unpinned, followed, params, setParams]);
  const studyName = study.data?.name ?? 'Study';
  // an id that is not a positive integer never loads (the queries stay disabled); an unknown or hidden study answers 404 too
  if (!Number.isInteger(studyId) || studyId <= 0) return <NotFound />;
  const is404 = (e: unknown) => e instanceof ApiError && e.status === 404;
  if (is404(study.error)) return <NotFound />;
  return (
    <div>
      <PageHeader
        title="Compare"
        trail={[
          { to: '/studies', label: 'Studies' },
          { to: `/studies/${studyId}`, label: studyName },
        ]}
        description="Every cell is shown, but coverslips are the replicates: tests and intervals are computed on coverslip means."
        actions={<ButtonLink to={`/studies/${studyId}/cell-table`}>Cell table</ButtonLink>}
      />
      <div className="mb-5 flex flex-wrap items-end gap-4">
        <label className="flex flex-col gap-1 text-sm font-medium">
          Coefficient
          <select className={inputClass()} value={q.get('coefficient')!} onChange={(e) => set('coefficient', e.target.value)} data-testid="coefficient">
            {COMPARE_COEFFICIENTS.map((c) => (
              <option key={c} value={c}>
                {labelOf(c)}
              </option>
            ))}
          </select>
        </label>
        <SourceSelect
          studyId={studyId}
          recipeId={params.get('recipeId')}
          runId={params.get('runId')}
          onChange={(v) => {
            const next = new URLSearchParams(params);
            next.delete('recipeId');
            next.delete('runId');
            if (v.recipeId) next.set('recipeId', v.recipeId);
            if (v.runId) next.set('runId', v.runId);
            setParams(next, { replace: true });
          }}
        />
        <SeedBox value={params.get('seed') ?? '1'} onChange={(v) => set('seed', v)} />
        {cmp.isFetching && <span className="pb-2 text-sm text-ink-soft">Computing…</span>}
      </div>
      {cmp.isPending ? (
        <Loading label="Computing the comparison…" />
      ) : cmp.isError ? (
        <ErrorNotice error={cmp.error} />
      ) : (cmp.data.pointsTotal ?? cmp.data.points.length) === 0 ? (
        <EmptyState title="No measured cells yet">Run a recipe on this study's fields; the comparison appears here once cells have measurements.</EmptyState>
      ) : (
        <ComparePanel data={cmp.data} fileBase={studyName.replace(/[^A-Za-z0-9_-]+/g, '-')} csvQuery={q.toString()} />
      )}
      <MeasurementCautions className="mt-6" saturatedCells={cmp.data?.omitted.saturated} where="in this comparison" />
    </div>
  );
}

const SEED = NumberTextFor('Bootstrap seed', CompareQuery.shape.seed.unwrap());

/**
 * The bootstrap seed: typed text is checked against the comparison query's own bound (a whole number from 0 to
 * 2³² − 1); a refused text stays in the box with a message beside it and the comparison keeps its last seed.
 */
export function SeedBox({ value, onChange }: { value: string; onChange: (v: string) => void }) {
  const box = useNumberBox({ schema: SEED, value: Number(value), onChange: (n) => onChange(String(n)) });
  return (
    <div className="flex flex-col gap-1 text-sm font-medium">
      <label className="flex flex-col gap-1">
        Bootstrap seed
        <input className={`${inputClass(!!box.error)} w-28`} inputMode="numeric" {...box.input} />
      </label>
      <BoxMessage box={box} className="max-w-xs text-xs font-normal text-danger" />
    </div>
  );
}
