/**
 * The auto-written methods paragraph of a report: a pure function of the frozen snapshot (no I/O, no clock),
 * so the same snapshot always yields the same text (server writes it into the snapshot; the client can re-render).
 *
 * It states every parameter of every recipe version used. Known settings get a sentence; every setting
 * (known or not) is also listed in full as `path = value`, so a setting added to RecipeSettings later is never
 * silently left out. It gives cells and coverslips per condition, the statistical tests, and cites each
 * method's paper.
 *
 * References (authors, year, journal, DOI): the coefficients' papers come from the coefficient registry
 * (shared/coefficients.ts), the thresholding and statistics papers are listed below. The Fisher 1915 and test
 * references agree with those of shared/stats.
 */
import { COEFFICIENT_CITATIONS, byKey, type Citation } from '../coefficients.js';
import type { ReportSnapshot } from '../schemas/reports.js';
import { RecipeSettings, SETTING_KEYS, describeSetting } from '../schemas/recipes.js';

export type { Citation };

/** Each method's paper: the coefficients' (registry), then thresholds and statistics. */
export const CITATIONS: Record<string, Citation> = {
  ...COEFFICIENT_CITATIONS,
  otsu: { key: 'Otsu 1979', text: 'Otsu N (1979) A threshold selection method from gray-level histograms. IEEE Trans. Syst. Man Cybern. 9:62–66. doi:10.1109/TSMC.1979.4310076' },
  lord: { key: 'Lord et al. 2020', text: 'Lord SJ, Velle KB, Mullins RD, Fritz-Laylin LK (2020) SuperPlots: communicating reproducibility and variability in cell biology. J. Cell Biol. 219:e202001064. doi:10.1083/jcb.202001064' },
  fisherZ: { key: 'Fisher 1915', text: 'Fisher RA (1915) Frequency distribution of the values of the correlation coefficient in samples from an indefinitely large population. Biometrika 10:507–521. doi:10.1093/biomet/10.4.507' },
  welch: { key: 'Welch 1947', text: 'Welch BL (1947) The generalization of "Student\'s" problem when several different population variances are involved. Biometrika 34:28–35. doi:10.1093/biomet/34.1-2.28' },
  mannWhitney: { key: 'Mann & Whitney 1947', text: 'Mann HB, Whitney DR (1947) On a test of whether one of two random variables is stochastically larger than the other. Ann. Math. Statist. 18:50–60. doi:10.1214/aoms/1177730491' },
  kruskal: { key: 'Kruskal & Wallis 1952', text: 'Kruskal WH, Wallis WA (1952) Use of ranks in one-criterion variance analysis. J. Am. Stat. Assoc. 47:583–621. doi:10.1080/01621459.1952.10483441' },
  anova: { key: 'Fisher 1925', text: 'Fisher RA (1925) Statistical Methods for Research Workers. Oliver and Boyd, Edinburgh (one-way analysis of variance).' },
  bootstrap: { key: 'Efron 1979', text: 'Efron B (1979) Bootstrap methods: another look at the jackknife. Ann. Statist. 7:1–26. doi:10.1214/aos/1176344552' },
};

export const CAUTIONS = [
  'Co-localization at light-microscope resolution (about 200 nm laterally, more along the optical axis) shows that two labels occupy the same diffraction-limited volume; it is not evidence of molecular interaction.',
  'Saturated pixels, channel bleed-through (crosstalk), chromatic shift between channels and unequal image adjustment all bias the coefficients.',
  'Cells are not independent observations: the coverslip is the unit of replication, and the tests use coverslip-level summaries.',
  'Research use only; not for diagnosis.',
];

// ---------------------------------------------------------------------------------------------------------
// settings helpers (RecipeSettings is read defensively so a renamed or added key still appears in full)

type Obj = Record<string, unknown>;
const isObj = (v: unknown): v is Obj => !!v && typeof v === 'object' && !Array.isArray(v);

/** Every leaf of the settings as [dotted path, value]; arrays of scalars are one leaf. */
export function settingLeaves(settings: unknown, prefix = ''): [string, unknown][] {
  if (!isObj(settings)) return prefix ? [[prefix, settings]] : [];
  const out: [string, unknown][] = [];
  for (const k of Object.keys(settings).sort()) {
    const v = settings[k];
    const p = prefix ? `${prefix}.${k}` : k;
    if (isObj(v)) out.push(...settingLeaves(v, p));
    else if (Array.isArray(v) && v.some(isObj)) v.forEach((x, i) => out.push(...settingLeaves(x, `${p}[${i}]`)));
    else out.push([p, v]);
  }
  return out;
}

/** How a setting value is written in the paragraph (the test reads values back with this function). */
export function formatSettingValue(v: unknown): string {
  if (v === null || v === undefined) return 'none';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : 'none';
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v === 'string') return v === '' ? '(empty)' : v;
  if (Array.isArray(v)) return `[${v.map(formatSettingValue).join(', ')}]`;
  return JSON.stringify(v);
}

const fmt = (v: unknown) => formatSettingValue(v);

/**
 * One sentence per recipe setting. Settings that parse as RecipeSettings reuse its `describeSetting`
 * sentences (the same words as the recipe editor) with numbered citations added; anything else falls back
 * to the full `path = value` list alone.
 */
function recipeSentences(settings: Obj, ref: (k: keyof typeof CITATIONS) => string): string[] {
  const parsed = RecipeSettings.safeParse(settings);
  if (!parsed.success) return [];
  const s = parsed.data;
  const out: string[] = [];
  for (const key of SETTING_KEYS) {
    if (key === 'coefficients') continue; // stated with citations in the coefficient paragraph
    if (key === 'mic' && !s.coefficients.includes('mic')) continue; // parameters of a measure not computed
    let sentence = describeSetting(key, s);
    const cited = (k: keyof typeof CITATIONS) => (sentence = sentence.replace(/\.$/, ` ${ref(k)}.`));
    if (key === 'threshold' && s.threshold.method === 'otsu') cited('otsu');
    if (key === 'threshold' && s.threshold.method === 'costes') cited('costes');
    if (key === 'threshold' && s.threshold.method !== 'none') sentence += ' Pixels strictly above a threshold count as foreground.';
    if (key === 'randomization' && s.randomization.enabled) {
      cited('costes');
      sentence += ' The p-value counts the observed image among the scrambles.';
    }
    if (key === 'objects' && s.objects.enabled)
      for (const k of ['lindeberg', 'besagDiggle'] as const) sentence = sentence.replace(CITATIONS[k].key, `${CITATIONS[k].key} ${ref(k)}`);
    out.push(sentence);
  }
  return out;
}

function joinList(a: string[]): string {
  if (a.length <= 1) return a.join('');
  return `${a.slice(0, -1).join(', ')} and ${a[a.length - 1]}`;
}

/** The methods paragraph (plain text, paragraphs separated by a blank line; references numbered at the end). */
export function methodsParagraph(snap: ReportSnapshot): string {
  const used: string[] = [];
  const cite = (k: keyof typeof CITATIONS) => {
    let i = used.indexOf(k);
    if (i < 0) {
      used.push(k);
      i = used.length - 1;
    }
    return `${CITATIONS[k].key} [${i + 1}]`;
  };
  const ref = (k: keyof typeof CITATIONS) => cite(k).slice(CITATIONS[k].key.length + 1);
  const parts: string[] = [];

  // 1. data
  const condText = snap.conditions.map(
    (c) => `${c.name}: ${c.cellsIncluded} cell${c.cellsIncluded === 1 ? '' : 's'} on ${c.coverslipsUsed} coverslip${c.coverslipsUsed === 1 ? '' : 's'}${c.cellsExcluded ? ` (${c.cellsExcluded} excluded)` : ''}`,
  );
  const excl = snap.exclusions.length
    ? ` ${snap.exclusions.length} cell${snap.exclusions.length === 1 ? ' was' : 's were'} excluded before analysis, each with a recorded reason (listed in the exclusions table).`
    : ' No cells were excluded.';
  parts.push(
    `Two-channel fields (${snap.fields.length} in total) of the study "${snap.study.name}" were analysed cell by cell; each cell is a region of interest outlined in image pixel coordinates, and a pixel belongs to a cell when its centre lies inside the outline (even-odd rule). Cells and coverslips per condition — ${condText.join('; ')}.${excl}`,
  );

  // 2. recipes
  for (const r of snap.recipes) {
    const s = isObj(r.settings) ? r.settings : {};
    const runs = snap.runs.filter((x) => r.runIds.includes(x.id));
    const seeds = [...new Set(runs.map((x) => x.seed))];
    const engines = [...new Set(runs.map((x) => x.engineVersion).filter((e): e is string => !!e))];
    const zs = [...new Set(runs.map((x) => x.zHandling).filter((e): e is string => !!e))];
    const leaves = settingLeaves(s);
    parts.push(
      [
        `Quantification used the recipe "${r.name}" version ${r.version} (${r.provisional ? 'PROVISIONAL: run before the recipe was approved' : `status ${r.status}`}; analysis engine ${engines.length ? engines.join(', ') : 'version not recorded'}; run${runs.length === 1 ? '' : 's'} ${runs.map((x) => `#${x.id}`).join(', ')}${seeds.length ? `, random seed ${seeds.join(', ')}` : ''}${zs.length ? `, z handling ${zs.join(', ')}` : ''}).`,
        ...recipeSentences(s, ref),
        leaves.length ? `Recipe settings in full: ${leaves.map(([p, v]) => `${p} = ${fmt(v)}`).join('; ')}.` : 'The recipe recorded no settings.',
      ].join(' '),
    );
  }
  if (!snap.recipes.length) parts.push('No measurements were available when the report was made; no recipe was used.');

  // 3. coefficients: each registry entry's methods phrase, once per distinct phrase, citations filled in
  const phrases = [...new Set(snap.coefficients.map((k) => byKey(k).methods).filter((m): m is string => m !== null))];
  const coefText = phrases.map((m) => m.replace(/\{(\w+)\}/g, (_, k: string) => cite(k)));
  parts.push(
    `Per cell, the report shows ${joinList(coefText)} (${snap.coefficients.map((k) => byKey(k).label).join(', ')}). Undefined values (an empty cell, a constant channel) are reported as missing, not as zero.`,
  );

  // 4. statistics
  const tests = new Set(snap.statistics.flatMap((s) => [s.test, ...(s.alsoTests ?? []).map((x) => x.test)]).map((t) => t.toLowerCase()));
  const has = (re: RegExp) => [...tests].some((t) => re.test(t));
  const testText: string[] = [];
  if (has(/welch/)) testText.push(`Welch's unequal-variance t-test (${cite('welch')})`);
  if (has(/mann|whitney|wilcoxon/)) testText.push(`the Mann–Whitney U test (${cite('mannWhitney')})`);
  if (has(/kruskal/)) testText.push(`the Kruskal–Wallis test (${cite('kruskal')})`);
  if (has(/anova/)) testText.push(`one-way analysis of variance (${cite('anova')})`);
  const boot = snap.statistics.some((s) => s.ciLow !== null) || has(/bootstrap/);
  const corrCoefs = snap.coefficients.filter((k) => byKey(k).fisherZ);
  parts.push(
    [
      `Conditions were compared with coverslips as the unit of replication: every cell is shown, coloured by coverslip, with coverslip means on top (${cite('lord')}).`,
      corrCoefs.length ? `Correlation coefficients (${corrCoefs.map((k) => byKey(k).label).join(', ')}) were averaged through Fisher's z transformation (${cite('fisherZ')}).` : '',
      testText.length
        ? `Coverslip-level summaries were tested with ${joinList(testText)}${boot ? `; effect sizes carry bootstrap confidence intervals that resample coverslips, then cells (${cite('bootstrap')}${bootText(snap)})` : ''}. Significance level α = 0.05, two-sided.`
        : 'No statistical test could be made (fewer than two coverslips in a condition, or a single condition).',
    ]
      .filter(Boolean)
      .join(' '),
  );

  // 5. saturation
  const sat = snap.saturation;
  parts.push(
    sat.fieldsWithSaturation > 0
      ? `Saturation: ${sat.fieldsWithSaturation} of ${snap.fields.length} fields contain saturated pixels (largest fraction: channel 1 ${pct(sat.maxFraction1)}, channel 2 ${pct(sat.maxFraction2)}); saturated pixels bias the coefficients.`
      : `Saturation: no field contains saturated pixels.`,
  );
  // 6. NaN pixels (said only when some were left out)
  const nan = snap.nanPixels;
  if (nan && nan.pixels > 0)
    parts.push(
      `Missing values: ${nan.pixels} pixel${nan.pixels === 1 ? '' : 's'} in ${nan.cells} cell${nan.cells === 1 ? '' : 's'} had no value (NaN) in at least one channel and ${nan.pixels === 1 ? 'was' : 'were'} left out of every pixel count, mean, threshold and coefficient.`,
    );
  if (snap.anyProvisional) parts.push('Some measurements come from a recipe version that was not approved when it ran; these results are provisional.');

  const refs = used.map((k, i) => `[${i + 1}] ${CITATIONS[k].text}`);
  return `${parts.join('\n\n')}\n\nReferences\n${refs.join('\n')}`;
}

/** the comparisons' bootstrap settings (resamples, seed, confidence) */
function bootText(snap: ReportSnapshot): string {
  const seen = new Set<string>();
  for (const c of Object.values(snap.comparisons)) {
    const b = c.bootstrap;
    seen.add(`${b.resamples} resamples, seed ${b.seed}, ${Math.round(b.confidence * 1000) / 10}% percentile intervals`);
  }
  return seen.size ? `; ${[...seen].join('; ')}` : '';
}

function pct(v: number | null) {
  return v === null ? 'unknown' : `${(v * 100).toFixed(v < 0.001 ? 3 : 2)}%`;
}
