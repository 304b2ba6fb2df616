/**
 * The methods paragraph states every parameter value of the recipe used (read back from the recipe row in
 * the database, not from the snapshot), the cells and coverslips per condition, the tests, and cites each
 * method's paper (DOIs as printed by the journals; from memory, checked by format only).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { recipes } from '../../server/db/schema.js';
import { methodsParagraph, formatSettingValue } from '../../shared/reports/methods.js';
import { RecipeSettings, describeSetting } from '../../shared/schemas/recipes.js';
import type { ReportSnapshot } from '../../shared/schemas/reports.js';
import { buildReportWorld, insertRun, type ReportWorld } from './fixtures.js';

let t: TestApp;
let rw: ReportWorld;
let snap: ReportSnapshot;

/** leaves of a JSON object as [path, value], walked independently of the code under test */
function leaves(o: unknown, p = ''): [string, unknown][] {
  if (o && typeof o === 'object' && !Array.isArray(o)) return Object.entries(o).flatMap(([k, v]) => leaves(v, p ? `${p}.${k}` : k));
  return [[p, o]];
}

beforeAll(async () => {
  t = await makeTestApp();
  rw = await buildReportWorld(t.ctx, t.world);
  insertRun(t.ctx, t.world.studyA, rw, (s, c) => 0.2 + 0.1 * s + 0.01 * c);
  const bio = await t.login('biologist');
  const res = await bio
    .post(`/api/studies/${t.world.studyA}/reports`)
    .send({ title: 'Methods', coefficients: ['pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'dcorBiasCorrectedSq', 'mandersM1', 'mandersM2', 'overlap', 'icq'] });
  expect(res.status).toBe(201);
  snap = res.body.snapshot;
});
afterAll(() => t?.close());

describe('methods paragraph', () => {
  it('contains each parameter value of the recipe used', () => {
    const recipe = t.ctx.db.select().from(recipes).where(eq(recipes.id, rw.recipeId)).get()!;
    const settings = recipe.settings;
    const all = leaves(settings);
    expect(all.length).toBeGreaterThanOrEqual(14);
    for (const [path, value] of all) {
      expect(snap.methods, `${path} = ${String(value)}`).toContain(`${path} = ${formatSettingValue(value)}`);
    }
    // and the spelled-out values a reader looks for, checked against the recipe row
    const s = RecipeSettings.parse(settings);
    expect(s.threshold.method).toBe('costes');
    for (const v of ['97', '83', '321', '5 × 5-pixel blocks', '0.05', 'seed 4242', 'slices 2 to 4', '37 measured pixels', 'left out']) expect(snap.methods).toContain(v);
    for (const k of ['background', 'saturation', 'threshold', 'randomization', 'z', 'minCellPixels', 'seed'] as const) expect(snap.methods).toContain(describeSetting(k, s).replace(/\.$/, ''));
    expect(snap.methods).toContain('"Facility standard" version 2');
  });

  it('states the MICe/TICe parameters (and cites them) only when the recipe computes them', () => {
    expect(snap.methods).not.toContain('MICe and TICe');
    const settings = (r: (typeof snap.recipes)[number]) => ({ ...(r.settings as Record<string, unknown>), coefficients: ['pearson', 'mic'], mic: { alpha: 0.55, c: 12 } });
    const withMic = { ...snap, recipes: snap.recipes.map((r) => ({ ...r, settings: settings(r) })) };
    const text = methodsParagraph(withMic);
    expect(text).toContain(describeSetting('mic', RecipeSettings.parse(settings(snap.recipes[0]))).replace(/\.$/, ''));
    expect(text).toContain('n^0.55');
  });

  it('states cells and coverslips per condition, the engine and the tests', () => {
    expect(snap.methods).toContain('control: 12 cells on 3 coverslips');
    expect(snap.methods).toContain('treated: 12 cells on 3 coverslips');
    expect(snap.methods).toContain('syntopy-engine 1.0.0');
    expect(snap.methods).toMatch(/Welch's unequal-variance t-test|Mann–Whitney|Kruskal–Wallis|ANOVA/);
    expect(snap.methods).toContain("Fisher's z");
    expect(snap.methods).toMatch(/no field contains saturated pixels/);
    // the comparison module's bootstrap settings, when it made the statistics (shared/schemas/compare.ts `bootstrap`)
    const boot = (snap.comparisons.pearson as { bootstrap?: { resamples: number; seed: number } } | null)?.bootstrap;
    if (boot) expect(snap.methods).toContain(`${boot.resamples} resamples, seed ${boot.seed}`);
  });

  it("cites each method's paper", () => {
    const refs = {
      'Pearson 1896': '10.1098/rsta.1896.0007',
      'Spearman 1904': '10.2307/1412159',
      'Kendall 1945': '10.1093/biomet/33.3.239',
      'Székely, Rizzo & Bakirov 2007': '10.1214/009053607000000505',
      'Székely & Rizzo 2013': '10.1016/j.jmva.2013.02.012',
      'Huo & Székely 2016': '10.1080/00401706.2015.1054435',
      'Manders et al. 1993': '10.1111/j.1365-2818.1993.tb03313.x',
      'Costes et al. 2004': '10.1529/biophysj.103.038422',
      'Li et al. 2004': '10.1523/JNEUROSCI.0346-04.2004',
      'Lord et al. 2020': '10.1083/jcb.202001064',
    };
    for (const [key, doi] of Object.entries(refs)) {
      expect(snap.methods, key).toContain(key);
      expect(snap.methods, doi).toContain(doi);
    }
    // numbered references match the citations in the text
    const refBlock = snap.methods.split('\nReferences\n')[1];
    const n = refBlock.split('\n').length;
    for (let i = 1; i <= n; i++) expect(snap.methods.split('\nReferences\n')[0]).toContain(`[${i}]`);
    expect(snap.methods).not.toContain('Otsu 1979'); // not used by this recipe
  });

  it('is a pure function of the snapshot, and Otsu / manual recipes read right', () => {
    expect(methodsParagraph(snap)).toBe(snap.methods);
    const otsu = structuredClone(snap);
    otsu.recipes[0].settings = RecipeSettings.parse({ threshold: { method: 'otsu' }, randomization: { enabled: false } });
    const text = methodsParagraph(otsu);
    expect(text).toContain('Otsu 1979');
    expect(text).toContain('10.1109/TSMC.1979.4310076');
    expect(text).toContain('No randomization test is run.');
    const manual = structuredClone(snap);
    manual.recipes[0].settings = RecipeSettings.parse({ threshold: { method: 'manual', t1: 512, t2: 640 } });
    expect(methodsParagraph(manual)).toContain('above 512');
    expect(methodsParagraph(manual)).toContain('threshold.t2 = 640');
  });

  it('mentions NaN pixels only when some were left out, with their number', () => {
    expect(snap.nanPixels).toEqual({ pixels: 0, cells: 0 });
    expect(snap.methods).not.toContain('NaN');
    const one = structuredClone(snap);
    one.nanPixels = { pixels: 1, cells: 1 };
    expect(methodsParagraph(one)).toContain('Missing values: 1 pixel in 1 cell had no value (NaN) in at least one channel and was left out');
    const old = structuredClone(snap);
    delete old.nanPixels; // reports made before the count was recorded
    expect(methodsParagraph(old)).toBe(snap.methods);
  });

  it('names the cautions', () => {
    const c = snap.cautions.join(' ');
    for (const w of ['200 nm', 'Saturated', 'bleed-through', 'Research use only']) expect(c).toContain(w);
  });

  it('states the objects section with its papers when a recipe had it on (DOIs from memory, checked by format)', () => {
    const objects = { enabled: true, scale: { kind: 'pixels', sigmaPx: 1.8 }, k: 6, minSeparationPx: null, pairDistance: { kind: 'um', um: 0.25, pixelSizeUm: null }, placements: 499, seed: 11 };
    const recipesOn = snap.recipes.map((r) => ({ ...r, settings: { ...(r.settings as object), objects } }));
    const text = methodsParagraph({ ...snap, recipes: recipesOn, coefficients: [...snap.coefficients, 'spotCount1', 'spotPaired1', 'spotChanceFraction1'] });
    const s = RecipeSettings.parse(recipesOn[0].settings);
    for (const part of ['σ = 1.8 pixels', 'more than 6 times', 'd = 0.25 µm in the specimen', '499 times', 'seed 11']) expect(text).toContain(part);
    expect(text).toContain('objects.pairDistance.um = 0.25');
    expect(text).toMatch(/Lindeberg 1998 \[\d+\]/);
    expect(text).toMatch(/Besag & Diggle 1977 \[\d+\]/);
    expect(text).toContain('10.1023/A:1008045108935');
    expect(text).toContain('10.2307/2346974');
    expect(text).toContain('10.1046/j.1365-2818.2003.01239.x');
    expect(s.objects.enabled).toBe(true);
    // off: one sentence saying so, no spot papers
    expect(snap.methods).toContain('No spots are detected (object-based measures are off)');
    expect(snap.methods).not.toContain('Lindeberg');
  });
});
