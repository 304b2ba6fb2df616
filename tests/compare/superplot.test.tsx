/**
 * The SuperPlot component (Lord et al. 2020 design) rendered to static SVG from a real computed comparison:
 * one small point per cell, one large marker per coverslip mean, a mean bar per condition, palette colours.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderToStaticMarkup } from 'react-dom/server';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements } from './seed.js';
import { computeComparison } from '../../server/compare/compute.js';
import { SuperPlot } from '../../src/features/compare/components/SuperPlot';
import { StatsTable } from '../../src/features/compare/components/StatsTable';
import { Histograms } from '../../src/features/compare/components/Histograms';
import { COVERSLIP_COLORS } from '../../src/features/compare/lib/palette';
import type { Comparison } from '../../shared/schemas/compare.js';

let t: TestApp;
let c: Comparison;
beforeAll(async () => {
  t = await makeTestApp();
  const s = seedMeasurements(t.ctx, {
    studyId: t.world.studyA,
    userId: t.world.users.biologist.id,
    conditions: [
      { name: 'untreated', coverslips: [5, 6, 7], pearson: 0.2 },
      { name: 'treated', coverslips: [4, 5, 6], pearson: 0.7 },
    ],
  });
  c = await computeComparison(t.ctx, t.world.studyA, { coefficient: 'pearson', conditionIds: s.conditionIds, resamples: 200 });
});
afterAll(() => t.close());

describe('SuperPlot', () => {
  it('draws every cell, every coverslip mean and each condition mean with its interval', () => {
    const html = renderToStaticMarkup(<SuperPlot data={c} />);
    const cellsLayer = html.split('data-layer="cells"')[1].split('</g>')[0];
    expect(cellsLayer.match(/<circle/g)?.length).toBe(33);
    const means = html.split('data-layer="coverslip-means"')[1].split('</g>')[0];
    expect(means.match(/<path/g)?.length).toBe(6);
    for (let i = 0; i < 6; i++) expect(means).toContain(`fill="${COVERSLIP_COLORS[i]}"`);
    expect(html).toContain('data-condition="untreated"');
    expect(html).toContain('data-condition="treated"');
    expect(html).toContain('<title id="superplot-title">');
    expect(html).toContain(c.summary.replace(/'/g, '&#x27;').replace(/"/g, '&quot;').slice(0, 40));
  });

  it('says when the answer lists a sample of the cells, counting every cell', () => {
    expect(renderToStaticMarkup(<SuperPlot data={c} />)).not.toContain('drawing');
    const sampled: Comparison = { ...c, pointsTotal: 1_234_567, pointsSample: { method: 'coverslip_even', max: 20000 } };
    const html = renderToStaticMarkup(<SuperPlot data={sampled} />);
    expect(html.split('data-layer="cells"')[1].split('</g>')[0].match(/<circle/g)?.length).toBe(33);
    expect(html).toContain('drawing 33 of 1,234,567 cells (in each coverslip its share: lowest, highest and evenly spaced cells); statistics use all');
  });

  it('places the higher condition mean higher on the page (SVG y grows downward)', () => {
    const html = renderToStaticMarkup(<SuperPlot data={c} />);
    // the mean bar is the condition group's only line with stroke-width 3
    const barY = (name: string) => {
      const g = html.split(`data-condition="${name}"`)[1].split('</g>')[0];
      const bar = [...g.matchAll(/<line [^>]*>/g)].map((m) => m[0]).find((l) => l.includes('stroke-width="3"'))!;
      return Number(/ y1="([-\d.]+)"/.exec(bar)![1]);
    };
    expect(barY('treated')).toBeLessThan(barY('untreated'));
  });

  it('never shows a negative zero in the plot, its axis, the statistics table or the histograms', () => {
    // a comparison centred on zero: values, means and interval ends of both signs, some exactly −0
    const z = structuredClone(c);
    z.points = z.points.map((p, i) => ({ ...p, value: (i % 3) * 0.1 - 0.1 - 1e-9 }));
    z.coverslips = z.coverslips.map((x, i) => ({ ...x, mean: i % 2 ? -0 : -0.0000001, median: -0 }));
    z.conditions = z.conditions.map((x) => ({ ...x, mean: -0, ci: { lower: -0.1, upper: -0 } }));
    z.effects = z.effects.map((e) => ({ ...e, estimate: -0, ci: { lower: -0.0004, upper: 0.1 } }));
    z.histograms = z.histograms.map((h) => ({ ...h, edges: h.edges.map((_, i) => -0.2 + (0.4 * i) / (h.edges.length - 1)), distances: h.distances.map((d) => ({ ...d, chiSquared: -0, emd: -0 })) }));
    const html = [renderToStaticMarkup(<SuperPlot data={z} />), renderToStaticMarkup(<StatsTable data={z} />), renderToStaticMarkup(<Histograms data={z} />)].join('');
    const text = html.replace(/<[^>]*>/g, ' ');
    expect(text).not.toMatch(/(^|[^\d.e])-0(\.0+)?(?![\d.])/);
    expect(text).toContain('0.000');
  });
});
