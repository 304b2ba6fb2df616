/**
 * Reads the statistics row of the report from the comparison module's result (Comparison, shared/schemas/
 * compare.ts, issue 7). Tolerant on purpose: the full result is kept in the snapshot as it is, and this
 * picks out the test, p-value, effect size with its bootstrap interval and the plain sentence. Returns null
 * when no test can be found (the report then makes its own coverslip-level test).
 */
import type { ReportCoefficient, StatisticRow } from '../../shared/schemas/reports.js';

type O = Record<string, unknown>;
const isO = (v: unknown): v is O => !!v && typeof v === 'object' && !Array.isArray(v);
const num = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : null);
const str = (v: unknown) => (typeof v === 'string' && v.trim() ? v : null);

const TEST_NAMES: Record<string, string> = {
  welch_t: "Welch's t-test",
  mann_whitney_u: 'Mann–Whitney U test',
  one_way_anova: 'one-way ANOVA',
  kruskal_wallis: 'Kruskal–Wallis test',
};

export function adaptComparison(k: ReportCoefficient, c: unknown): StatisticRow | null {
  if (!isO(c)) return null;
  const test = isO(c.test) ? c.test : Array.isArray(c.tests) && isO(c.tests[0]) ? (c.tests[0] as O) : isO(c.statistics) ? c.statistics : null;
  if (!test) return null;
  const name = str(test.test) ?? str(test.name) ?? str(test.kind);
  if (!name) return null;
  const effect = isO(c.effect) ? c.effect : isO(c.effectSize) ? c.effectSize : Array.isArray(c.effects) && isO(c.effects[0]) ? (c.effects[0] as O) : null;
  const ci = effect && isO(effect.ci) ? effect.ci : null;
  const ciArr = effect && Array.isArray(effect.ci) ? effect.ci : null;
  const df = Array.isArray(test.df) ? num(test.df[0]) : num(test.df);
  const sentence = str(c.sentence) ?? str(c.summary) ?? str(c.plainSentence) ?? str(test.sentence) ?? str(c.conclusion);
  const p = num(test.p) ?? num(test.pValue);
  const others = Array.isArray(c.tests) ? (c.tests.slice(1).filter(isO) as O[]) : [];
  const alsoTests = others
    .map((o) => ({ test: str(o.test) ?? str(o.name) ?? '', statistic: num(o.statistic), df: Array.isArray(o.df) ? num(o.df[0]) : num(o.df), p: num(o.p) }))
    .filter((o) => o.test)
    .map((o) => ({ ...o, test: TEST_NAMES[o.test] ?? o.test }));
  return {
    alsoTests,
    coefficient: k,
    test: TEST_NAMES[name] ?? name,
    statistic: num(test.statistic),
    df,
    p,
    effect: effect ? (num(effect.estimate) ?? num(effect.value) ?? num(effect.difference)) : null,
    effectLabel: effect ? (str(effect.label) ?? str(effect.kind) ?? null) : null,
    ciLow: ci ? (num(ci.low) ?? num(ci.lo) ?? num(ci.lower)) : ciArr ? num(ciArr[0]) : effect ? (num(effect.ciLow) ?? num(effect.low)) : null,
    ciHigh: ci ? (num(ci.high) ?? num(ci.hi) ?? num(ci.upper)) : ciArr ? num(ciArr[1]) : effect ? (num(effect.ciHigh) ?? num(effect.high)) : null,
    sentence: sentence ?? `${TEST_NAMES[name] ?? name}: p ${p === null ? 'not defined' : p < 0.001 ? '< 0.001' : `= ${p.toFixed(3)}`}.`,
    source: 'compare',
  };
}
