// @vitest-environment jsdom
/**
 * Fixes from the product walkthrough (2026-12-01): wording by role, the start-run path without a study,
 * not-found for bad ids, cautions and provisional markers beside measurements. (common practice: these are
 * product decisions from shared/PRODUCT.md, no outside reference)
 */
import { describe, expect, it } from 'vitest';
import { screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as Runs } from '@/app/routes/Runs';
import { Component as ReviewQueue } from '@/app/routes/ReviewQueue';
import { Component as Compare } from '@/app/routes/Compare';
import { Component as CellTable } from '@/app/routes/CellTable';
import { Comparison } from '@shared/schemas/compare';
import { GridRow, NUMERIC_COLUMNS } from '@shared/schemas/cell-table';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';
import { makeStudy } from './fixtures';

const study = makeStudy();
const { conditions: _c, ...summary } = study;
const noRuns = on('GET', /^\/runs/, () => ({ body: { runs: [] } }));
const noRecipes = on('GET', /^\/recipes/, () => ({ body: { recipes: [] } }));

describe('Runs', () => {
  it('without a study, offers the studies the user may run in, then the start form with each coverslip named once', async () => {
    mockApi(asUser(demoUser(['microscopist'])), on('GET', '/studies', () => ({ body: { studies: [summary, { ...summary, id: 4, name: 'Read only', permissions: ['read'] }] } })), on('GET', '/studies/3', () => ({ body: study })), noRuns, noRecipes);
    const { router } = renderRoutes([{ path: '/runs', Component: Runs }], '/runs');
    const picker = await screen.findByLabelText('Study');
    expect(within(picker).getAllByRole('option').map((o) => o.textContent)).toEqual(['Puncta sharing (2 fields)']); // not the read-only study
    expect(await screen.findByText(/Start one above/)).toBeTruthy();
    await userEvent.setup().click(screen.getByRole('button', { name: 'Choose recipe and fields' }));
    expect(router.state.location.search).toBe('?studyId=3');
    const measure = await screen.findByLabelText('Measure');
    await within(measure).findByText(/Coverslip 1 · Control/);
    const labels = within(measure).getAllByRole('option').map((o) => o.textContent ?? '');
    expect(labels).toContain('Coverslip 1 · Control (2 fields)');
    expect(labels.some((l) => /Coverslip Coverslip/.test(l))).toBe(false);
  });

  it('says nothing about starting runs to a collaborator', async () => {
    mockApi(asUser(demoUser(['collaborator'])), on('GET', '/studies', () => ({ body: { studies: [{ ...summary, permissions: ['read'] }] } })), noRuns);
    renderRoutes([{ path: '/runs', Component: Runs }], '/runs?studyId=3');
    expect(await screen.findByText('No runs yet')).toBeTruthy();
    expect(screen.queryByText(/start/i)).toBeNull();
    expect(screen.queryByLabelText('Measure')).toBeNull();
  });
});

describe('Review queue', () => {
  it('is read-only information for a microscopist', async () => {
    mockApi(asUser(demoUser(['microscopist'])), noRecipes);
    renderRoutes([{ path: '/review', Component: ReviewQueue }], '/review');
    expect(await screen.findByText(/wait here for a facility manager/)).toBeTruthy();
    expect(screen.queryByText(/until you approve/)).toBeNull();
    expect(screen.queryByText(/approve it or return it/)).toBeNull();
  });

  it('addresses a facility manager as the reviewer', async () => {
    mockApi(asUser(demoUser(['facility_manager'])), noRecipes);
    renderRoutes([{ path: '/review', Component: ReviewQueue }], '/review');
    expect(await screen.findByText(/until you approve or return them/)).toBeTruthy();
  });
});

const comparison = (provisional: number, saturated: number) =>
  Comparison.parse({
    studyId: 3,
    coefficient: 'pearson',
    label: "Pearson's r",
    averaging: 'fisher_z',
    source: { runId: 1, recipeId: 2, recipeName: 'Draft recipe', recipeVersion: 1 },
    bootstrap: { resamples: 500, seed: 1, confidence: 0.95 },
    points: [
      { cellId: 1, fieldId: 1, coverslipId: 100, conditionId: 10, value: 0.2 },
      { cellId: 2, fieldId: 2, coverslipId: 110, conditionId: 11, value: 0.6 },
    ],
    coverslips: [
      { id: 100, name: 'Coverslip 1', replicate: 1, conditionId: 10, colorIndex: 0, nCells: 1, mean: 0.2, median: 0.2, sd: null },
      { id: 110, name: 'Coverslip 1', replicate: 1, conditionId: 11, colorIndex: 1, nCells: 1, mean: 0.6, median: 0.6, sd: null },
    ],
    conditions: [
      { id: 10, name: 'Control', nCoverslips: 1, nCells: 1, mean: 0.2, sdOfCoverslipMeans: null, ci: { lower: null, upper: null } },
      { id: 11, name: 'Treated', nCoverslips: 1, nCells: 1, mean: 0.6, sdOfCoverslipMeans: null, ci: { lower: null, upper: null } },
    ],
    effects: [],
    tests: [],
    histograms: [],
    omitted: { excluded: 0, undefinedValue: 0, provisional, saturated },
    warnings: [],
    summary: 'Mean of coverslip means.',
    generatedAt: '2026-12-01T00:00:00Z',
  });

describe('Compare', () => {
  it('shows the not-found page for an id that is not a number, without waiting forever', async () => {
    mockApi(asUser(demoUser(['biologist'])));
    renderRoutes([{ path: '/studies/:studyId/compare', Component: Compare }], '/studies/abc/compare');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
    expect(screen.queryByText(/Computing the comparison/)).toBeNull();
  });

  it('shows the not-found page for an unknown study', async () => {
    mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/999', () => ({ status: 404, body: { error: 'study 999 not found' } })));
    renderRoutes([{ path: '/studies/:studyId/compare', Component: Compare }], '/studies/999/compare');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
  });

  it('marks provisional values and shows the cautions, with saturation when the data flag it', async () => {
    mockApi(asUser(demoUser(['biologist'])), on('GET', '/studies/3', () => ({ body: study })), on('GET', /^\/studies\/3\/compare\?/, () => ({ body: comparison(2, 1) })));
    renderRoutes([{ path: '/studies/:studyId/compare', Component: Compare }], '/studies/3/compare');
    expect(await screen.findByTestId('compare-provisional')).toBeTruthy();
    expect(screen.getAllByText('Provisional').length).toBeGreaterThan(1);
    const cautions = screen.getByRole('group', { name: 'Cautions' });
    expect(cautions.textContent).toMatch(/about 200 nm/);
    expect(cautions.textContent).toMatch(/not that the molecules interact/);
    expect(cautions.textContent).toMatch(/bleed-through/);
    expect(cautions.textContent).toMatch(/Research use only; not for diagnosis/);
    expect(cautions.textContent).toMatch(/1 cell in this comparison has pixels at the detector's ceiling/);
  });
});

const row = (over: Partial<GridRow>): GridRow =>
  GridRow.parse({
    cellId: 1,
    cell: 'Cell 1',
    fieldId: 1,
    field: 'F1',
    coverslipId: 100,
    coverslip: 'Coverslip 1',
    replicate: 1,
    conditionId: 10,
    condition: 'Control',
    measurementId: 5,
    runId: 1,
    ...Object.fromEntries(NUMERIC_COLUMNS.map((k) => [k, 0.5])),
    thresholdMethod: 'costes',
    saturated: false,
    provisional: false,
    excluded: false,
    exclusionReason: null,
    excludedAt: null,
    excludedBy: null,
    ...over,
  });

describe('Cell table', () => {
  it('shows a not-found page for a bad id', async () => {
    mockApi(asUser(demoUser(['biologist'])));
    renderRoutes([{ path: '/studies/:studyId/cell-table', Component: CellTable }], '/studies/abc/cell-table');
    expect(await screen.findByRole('heading', { name: 'Nothing here' })).toBeTruthy();
  });

  it('has a quiet exclude action named with the cell, marks provisional rows, and shows the cautions', async () => {
    const rows = [row({}), row({ cellId: 2, cell: 'Cell 2', provisional: true, saturated: true })];
    mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/studies/3', () => ({ body: study })),
      on('GET', /^\/studies\/3\/cell-table\?/, () => ({ body: { rows, total: 2, page: 0, pageSize: 50, nextCursor: null, source: { runId: 1, recipeId: 2, recipeName: 'R', recipeVersion: 1 }, canExclude: true } })),
      on('GET', '/studies/3/measurement-sources', () => ({ body: { recipes: [], defaultRecipeId: null } })),
    );
    renderRoutes([{ path: '/studies/:studyId/cell-table', Component: CellTable }], '/studies/3/cell-table');
    const exclude = await screen.findByRole('button', { name: 'Exclude… Cell 2 (F1)' });
    expect(exclude.className).not.toMatch(/text-danger|bg-danger/);
    expect(exclude.tagName).toBe('BUTTON'); // reachable with Tab
    const table = screen.getByTestId('cell-table');
    expect(within(table.querySelector('tbody')!).getAllByText('Provisional')).toHaveLength(1); // the header also says it
    expect(screen.getByText(/1 cell on this page was measured with a recipe version that is not approved/)).toBeTruthy();
    const cautions = screen.getByRole('group', { name: 'Cautions' });
    expect(cautions.textContent).toMatch(/Research use only; not for diagnosis/);
    expect(cautions.textContent).toMatch(/1 cell on this page has pixels at the detector's ceiling/);
  });
});
