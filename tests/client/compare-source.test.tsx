// @vitest-environment jsdom
/**
 * Compare keeps its source: a page opened without one pins the recipe version the server followed into the
 * URL (so a reload, a bookmark or the CSV links keep these measurements after another recipe runs), names the
 * source and the scale, and leaves a pinned URL alone. (our checks)
 */
import { describe, expect, it } from 'vitest';
import { screen, waitFor } from '@testing-library/react';
import { Component as Compare } from '@/app/routes/Compare';
import { Comparison } from '@shared/schemas/compare';
import { makeStudy } from './fixtures';
import { asUser, demoUser, mockApi, on, renderRoutes, type Call } from './utils';

const study = makeStudy();
const comparison = (source: Comparison['source']) =>
  Comparison.parse({
    studyId: 3,
    coefficient: 'pearson',
    label: "Pearson's r",
    averaging: 'fisher_z',
    scale: 'fisher_z',
    source,
    bootstrap: { resamples: 500, seed: 1, confidence: 0.95 },
    points: [
      { cellId: 1, fieldId: 1, coverslipId: 100, conditionId: 10, value: 0.2 },
      { cellId: 2, fieldId: 2, coverslipId: 110, conditionId: 11, value: 0.6 },
    ],
    coverslips: [
      { id: 100, name: 'Coverslip 1', replicate: 1, conditionId: 10, colorIndex: 0, nCells: 1, mean: 0.2, meanZ: Math.atanh(0.2), median: 0.2, sd: null },
      { id: 110, name: 'Coverslip 1', replicate: 1, conditionId: 11, colorIndex: 1, nCells: 1, mean: 0.6, meanZ: Math.atanh(0.6), median: 0.6, sd: null },
    ],
    conditions: [
      { id: 10, name: 'Control', nCoverslips: 1, nCells: 1, mean: 0.2, meanZ: Math.atanh(0.2), sdOfCoverslipMeans: null, ci: { lower: null, upper: null } },
      { id: 11, name: 'Treated', nCoverslips: 1, nCells: 1, mean: 0.6, meanZ: Math.atanh(0.6), sdOfCoverslipMeans: null, ci: { lower: null, upper: null } },
    ],
    effects: [],
    tests: [],
    histograms: [],
    omitted: { excluded: 0, undefinedValue: 0, provisional: 0, saturated: 0 },
    warnings: [],
    summary: 'Mean of coverslip means.',
    generatedAt: '2026-12-01T00:00:00Z',
  });

const sources = on('GET', '/studies/3/measurement-sources', () => ({
  body: { recipes: [{ recipeId: 2, name: 'Standard', version: 4, runs: [{ id: 9, status: 'done', createdAt: '2026-12-01T00:00:00Z', provisional: false, measurements: 2 }] }], defaultRecipeId: 2 },
}));
const compareCalls = (calls: Call[]) => calls.filter((c) => c.path.startsWith('/studies/3/compare?')).map((c) => new URLSearchParams(c.path.split('?')[1]));

describe('Compare source', () => {
  it('pins the recipe version an unpinned page followed, and names it with the scale', async () => {
    const calls = mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/studies/3', () => ({ body: study })),
      sources,
      on('GET', /^\/studies\/3\/compare\?/, (c) => {
        const pinned = new URLSearchParams(c.path.split('?')[1]).has('recipeId');
        return { body: comparison({ kind: 'recipe', pinned, runId: null, recipeId: 2, recipeName: 'Standard', recipeVersion: 4 }) };
      }),
    );
    const { router } = renderRoutes([{ path: '/studies/:studyId/compare', Component: Compare }], '/studies/3/compare');
    await waitFor(() => expect(router.state.location.search).toBe('?recipeId=2'));
    expect((await screen.findByTestId('compare-source')).textContent).toBe(
      "Measurements of Standard v4: the latest per cell among its runs on this study; coverslip means are averaged and tested on Fisher's z and shown as r.",
    );
    await waitFor(() => expect(compareCalls(calls).at(-1)!.get('recipeId')).toBe('2'));
    const csv = screen.getByText('Coverslips CSV').getAttribute('href')!;
    expect(new URLSearchParams(csv.split('?')[1]).get('recipeId')).toBe('2');
  });

  it('leaves a pinned run alone and names it', async () => {
    mockApi(
      asUser(demoUser(['biologist'])),
      on('GET', '/studies/3', () => ({ body: study })),
      sources,
      on('GET', /^\/studies\/3\/compare\?/, () => ({ body: comparison({ kind: 'run', pinned: true, runId: 9, recipeId: 2, recipeName: 'Standard', recipeVersion: 4 }) })),
    );
    const { router } = renderRoutes([{ path: '/studies/:studyId/compare', Component: Compare }], '/studies/3/compare?runId=9');
    expect((await screen.findByTestId('compare-source')).textContent).toMatch(/^Measurements of run 9 \(Standard v4\);/);
    expect(router.state.location.search).toBe('?runId=9');
  });
});
