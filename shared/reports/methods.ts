/**
 * The auto-written methods paragraph of a report: a pure function of the frozen snapshot (no I/O, no clock),
 * so the same snapshot always yields the same text (server writes it into the snapshot; the client can re-render).
 *
 * It reads as the methods section of a paper: how the outlines were made (drawn, imported, or found
 * automatically and with which settings), the pixel size, every parameter of every recipe version used in words
 * with its unit (the recipe editor's sentences, `describeSetting`; no internal setting keys), z handling in
 * 1-based slice words, cells and coverslips per condition, when cells were excluded, the statistical tests,
 * and each method's paper. tests/reports/methods.test.ts changes every setting in turn and checks that the text
 * changes with it, so a setting added to RecipeSettings later cannot be left out silently.
 *
 * References (authors, year, journal, DOI): the coefficients' papers come from the coefficient registry
 * (shared/coefficients.ts), the thresholding and statistics papers are listed below. The Fisher 1915 and test
 * references agree with those of shared/stats.
 */
import { COEFFICIENT_CITATIONS, byKey, type Citation } from '../coefficients.js';
import type { ReportSnapshot } from '../schemas/reports.js';
import { RecipeSettings, SETTING_KEYS, describeSetting, projectionCaution } from '../schemas/recipes.js';
import type { FoundWith } from '../schemas/cells.js';
import { formatAmount, foundStepsWords } from '../format/origin.js';
import { plural } from '../format/plural.js';

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
  guizarSicairos: { key: 'Guizar-Sicairos et al. 2008', text: 'Guizar-Sicairos M, Thurman ST, Fienup JR (2008) Efficient subpixel image registration algorithms. Opt. Lett. 33:156–158. doi:10.1364/OL.33.000156' },
  unmixing: { key: 'Zimmermann et al. 2003', text: 'Zimmermann T, Rietdorf J, Pepperkok R (2003) Spectral imaging and its applications in live cell microscopy. FEBS Lett. 546:87–92. doi:10.1016/S0014-5793(03)00521-0' },
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


/**
 * One sentence per recipe setting. Settings that parse as RecipeSettings reuse its `describeSetting`
 * sentences (the same words as the recipe editor) with numbered citations added; anything else falls back
 * to the full `path = value` list alone.
 */
function recipeSentences(settings: Obj, ref: (k: keyof typeof CITATIONS) => string, stacks: boolean): string[] {
  const parsed = RecipeSettings.safeParse(settings);
  if (!parsed.success) return [];
  const s = parsed.data;
  const out: string[] = [];
  for (const key of SETTING_KEYS) {
    if (key === 'coefficients') continue; // stated with citations in the coefficient paragraph
    if (key === 'mic' && !s.coefficients.includes('mic')) continue; // parameters of a measure not computed
    if (key === 'z' && !stacks) {
      out.push('Every field is a single optical section (no z-stacks).');
      continue;
    }
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
    const projection = key === 'z' ? projectionCaution(s.z) : null;
    if (projection) sentence += ` Caution: ${projection}`;
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

  // 1. data: fields, pixel size, how the outlines were made, cells per condition, exclusions
  const condText = snap.conditions.map(
    (c) => `${c.name}: ${c.cellsIncluded} cell${c.cellsIncluded === 1 ? '' : 's'} on ${c.coverslipsUsed} coverslip${c.coverslipsUsed === 1 ? '' : 's'}${c.cellsExcluded ? ` (${c.cellsExcluded} excluded)` : ''}`,
  );
  parts.push(
    [
      `Two-channel fields (${snap.fields.length} in total) of the study "${snap.study.name}" were analysed cell by cell.`,
      pixelSizeSentence(snap),
      stackSentence(snap),
      outlineSentence(snap, cite),
      'Each cell is a region of interest in image pixel coordinates; a pixel belongs to a cell when its centre lies inside the outline (even-odd rule).',
      `Cells and coverslips per condition — ${condText.join('; ')}.`,
      exclusionSentence(snap),
    ]
      .filter(Boolean)
      .join(' '),
  );

  // 2. recipes
  const stacks = snap.fields.some((f) => f.sizeZ > 1);
  for (const r of snap.recipes) {
    const s = isObj(r.settings) ? r.settings : {};
    const runs = snap.runs.filter((x) => r.runIds.includes(x.id));
    const seeds = [...new Set(runs.map((x) => x.seed))];
    const engines = [...new Set(runs.map((x) => x.engineVersion).filter((e): e is string => !!e))];
    const sentences = recipeSentences(s, ref, stacks);
    parts.push(
      [
        `Quantification used the recipe "${r.name}" version ${r.version} (${r.provisional ? 'PROVISIONAL: run before the recipe was approved' : `status ${r.status}`}; analysis engine ${engines.length ? engines.join(', ') : 'version not recorded'}; run${runs.length === 1 ? '' : 's'} ${runs.map((x) => `#${x.id}`).join(', ')}${seeds.length ? `, random seed ${seeds.join(', ')}` : ''}).`,
        ...(sentences.length ? sentences : ['Its settings could not be read as recipe settings and are not described here.']),
      ].join(' '),
    );
  }
  if (!snap.recipes.length) parts.push('No measurements were available when the report was made; no recipe was used.');
  const spots3d = spots3dParagraph(snap);
  if (spots3d) parts.push(spots3d);

  // 3. coefficients: each registry entry's methods phrase, once per distinct phrase, citations filled in
  const phrases = [...new Set(snap.coefficients.map((k) => byKey(k).methods).filter((m): m is string => m !== null))];
  const coefText = phrases.map((m) => m.replace(/\{(\w+)\}/g, (_, k: string) => cite(k)));
  parts.push(
    `Per cell, the report shows ${joinList(snap.coefficients.map((k) => byKey(k).label))}: ${joinList(coefText)}. Undefined values (an empty cell, a constant channel) are reported as missing, not as zero.`,
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
  // 7. channel calibration (said only when some cells were corrected)
  const cals = snap.calibrations;
  if (cals && cals.applied.length > 0) {
    const num = (v: number | null) => (v === null ? 'not given' : String(Number(v.toPrecision(6))));
    const one = (a: (typeof cals.applied)[number]) => {
      const shift = a.dx !== null && a.dy !== null ? `channel 2 shifted into register by dx = ${num(a.dx)} px, dy = ${num(a.dy)} px (measured by phase correlation with upsampled refinement, ${cite('guizarSicairos')}; bilinear interpolation, pixels whose position fell outside the image not measured)` : 'no shift';
      const bleed = a.a21 !== null || a.a12 !== null ? `bleed-through removed by linear unmixing with a21 = ${num(a.a21 ?? 0)} and a12 = ${num(a.a12 ?? 0)} (${cite('unmixing')}; negative results set to 0)` : 'no bleed-through correction';
      return `calibration v${a.version} of instrument ${a.instrument} for ${a.cells} cell${a.cells === 1 ? '' : 's'}: ${shift}, then ${bleed}`;
    };
    parts.push(
      `Channel calibration: ${cals.applied.map(one).join('; ')}.` +
        (cals.applied.length > 1 || cals.uncalibratedCells > 0 ? ` The measurements mix calibrations${cals.uncalibratedCells > 0 ? ` (${cals.uncalibratedCells} cell${cals.uncalibratedCells === 1 ? ' was' : 's were'} measured without one)` : ''}; compare them with care.` : ''),
    );
  }
  if (snap.anyProvisional) parts.push('Some measurements come from a recipe version that was not approved when it ran; these results are provisional.');

  const refs = used.map((k, i) => `[${i + 1}] ${CITATIONS[k].text}`);
  return `${parts.join('\n\n')}\n\nReferences\n${refs.join('\n')}`;
}

/**
 * Spots found in 3D (from the measurements' provenance, `snap.spots3d`): the lateral and axial filter widths
 * (σz by its rule — σ · pixel size / z step, the recipe's slices or its axial PSF width — in slices and µm), and that distances are specimen distances with z scaled by
 * the z step, in pixel widths and µm. '' when no reported cell had its spots found in 3D.
 */
function spots3dParagraph(snap: ReportSnapshot): string {
  const sp = snap.spots3d;
  if (!sp || !sp.groups.length) return '';
  const n = (v: number) => String(Number(v.toPrecision(3)));
  const one = (g: (typeof sp.groups)[number]) => {
    const who = `for ${plural(g.cells, 'cell')} of z-stacks measured in 3D, spots were found in 3D over the cell's voxels with the Laplacian-of-Gaussian filter at σ = ${n(g.sigmaPx)} pixels across the plane`;
    const from = g.sigmaZFrom ?? 'lateral';
    const rule =
      from === 'slices' ? 'σz set in the recipe' : from === 'psf' && g.psfDepthUm != null ? `σz = axial point-spread width (FWHM ${n(g.psfDepthUm)} µm) / 2.355 / z step` : 'σz = σ × pixel size / z step';
    const value = (v: number) => (from === 'slices' ? `σz = ${n(v)} slices (set in the recipe)` : `${rule} = ${n(v)} slices`);
    if (g.sigmaZ === null || g.zScale === null || g.pixelSizeUm === null || g.zStepUm === null)
      return `${who} and ${rule} along the optical axis (the voxel size is not recorded, so its value is not stated here); nearest-neighbour distances, pairing within d = ${n(g.pairDistancePx)} pixels and the chance placements use distances in the specimen, z differences scaled by the z step, measured in pixel widths`;
    return (
      `${who} and ${value(g.sigmaZ)} along the optical axis (voxel ${n(g.pixelSizeUm)} × ${n(g.pixelSizeUm)} × ${n(g.zStepUm)} µm, so the filter is ${n(g.sigmaPx * g.pixelSizeUm)} µm wide in x, y and ${n(g.sigmaZ * g.zStepUm)} µm in z)` +
      `; nearest-neighbour distances, pairing within d and the chance placements use distances in the specimen: a z difference counts ${n(g.zScale)} pixel widths per slice (the z step over the pixel size), so distances are in pixel widths of ${n(g.pixelSizeUm)} µm and d = ${n(g.pairDistancePx)} pixels is ${n(g.pairDistancePx * g.pixelSizeUm)} µm`
    );
  };
  const rest = sp.planeCells > 0 ? ` The spots of the other ${plural(sp.planeCells, 'cell')} were found within one plane.` : '';
  const text = sp.groups.map(one).join('; ');
  return `Spots in 3D: ${text}.${rest}`;
}

/** "Pixel size: 0.065 µm (from the image files)." — or the sizes per field, or that none was recorded. */
/** z-stacks and their voxel sizes (x = y = the pixel size, z = the step between slices), when stated; '' without stacks. */
function stackSentence(snap: ReportSnapshot): string {
  const stacks = snap.fields.filter((f) => f.sizeZ > 1);
  if (!stacks.length) return '';
  const um = (v: number) => String(Number(v.toPrecision(4)));
  const voxels = [...new Set(stacks.map((f) => (f.pixelSizeUm != null && f.zStepUm != null ? `${um(f.pixelSizeUm)} × ${um(f.pixelSizeUm)} × ${um(f.zStepUm)} µm` : 'not stated')))];
  const which = stacks.length === snap.fields.length ? (stacks.length === 1 ? 'The field is a z-stack' : 'All fields are z-stacks') : stacks.length === 1 ? '1 of the fields is a z-stack' : `${stacks.length} of the fields are z-stacks`;
  return `${which} (${[...new Set(stacks.map((f) => f.sizeZ))].sort((a, b) => a - b).join(', ')} slices; voxel size ${voxels.join(', ')}).`;
}

function pixelSizeSentence(snap: ReportSnapshot): string {
  if (!snap.fields.length) return '';
  const bySize = new Map<number, number>();
  let unknown = 0;
  for (const f of snap.fields) {
    if (f.pixelSizeUm === null) unknown++;
    else bySize.set(f.pixelSizeUm, (bySize.get(f.pixelSizeUm) ?? 0) + 1);
  }
  if (!bySize.size) return 'The image files recorded no pixel size, so sizes are given in pixels.';
  const sizes = [...bySize].sort((a, b) => a[0] - b[0]);
  const known = sizes.length === 1 && !unknown ? `${formatAmount(sizes[0][0])} µm` : sizes.map(([u, n]) => `${formatAmount(u)} µm (${plural(n, 'field')})`).join(', ');
  return `Pixel size${sizes.length > 1 ? 's' : ''}: ${known}, as recorded in the image files${unknown ? `; not recorded for ${plural(unknown, 'field')}` : ''}.`;
}

/** How the outlines were made: by hand, imported from label images, found automatically (with settings), demo. */
function outlineSentence(snap: ReportSnapshot, cite: (k: keyof typeof CITATIONS) => string): string {
  const cells = snap.cells;
  if (!cells.length) return '';
  const drawn = cells.filter((c) => c.origin?.how === 'drawn').length;
  const demo = cells.filter((c) => c.origin?.how === 'demo').length;
  const unknown = cells.filter((c) => !c.origin).length;
  const imported = cells.flatMap((c) => (c.origin?.how === 'imported' ? [c.origin] : []));
  const found = cells.flatMap((c) => (c.origin?.how === 'found' ? [c.origin] : []));
  const edited = [...imported, ...found].filter((o) => o.edited).length;
  const items: string[] = [];
  if (drawn) items.push(`${plural(drawn, 'cell was', 'cells were')} outlined by hand`);
  if (imported.length) {
    const files = [...new Set(imported.map((o) => o.file).filter((f): f is string => !!f))];
    items.push(`${plural(imported.length, 'cell was', 'cells were')} imported from label images${files.length ? ` (${files.join(', ')})` : ''}, one cell per label`);
  }
  if (found.length) {
    // one group per setting (the level differs per field under Otsu's method: given as a range)
    const groups = new Map<string, { s: FoundWith | null; n: number; levels: number[] }>();
    for (const o of found) {
      const k = o.settings ? JSON.stringify({ ...o.settings, level: 0 }) : 'unknown';
      const g = groups.get(k) ?? groups.set(k, { s: o.settings, n: 0, levels: [] }).get(k)!;
      g.n++;
      if (o.settings) g.levels.push(o.settings.level);
    }
    for (const g of groups.values()) {
      if (!g.s) {
        items.push(`${plural(g.n, 'cell was', 'cells were')} found automatically (settings not recorded)`);
        continue;
      }
      const lo = Math.min(...g.levels), hi = Math.max(...g.levels);
      const level = lo === hi ? `threshold level ${formatAmount(lo)} intensity units` : `threshold levels ${formatAmount(lo)} to ${formatAmount(hi)} intensity units across fields`;
      const otsu = g.s.method === 'otsu' ? ` (${cite('otsu')})` : '';
      items.push(`${plural(g.n, 'cell was', 'cells were')} found automatically from ${foundStepsWords(g.s).join(', ')}, at ${level}${otsu}`);
    }
  }
  if (demo) items.push(`${plural(demo, 'outline', 'outlines')} came with the invented demo data`);
  if (unknown) items.push(`for ${plural(unknown, 'cell')} the report does not record how the outline was made`);
  const text = `Outlines: ${items.length > 1 ? `${items.slice(0, -1).join('; ')}; and ${items[items.length - 1]}` : items[0]}.`;
  return edited ? `${text} ${plural(edited, 'imported or found outline was', 'imported or found outlines were')} then corrected by hand.` : text;
}

/** Exclusions: after measurement (the cell has a measurement in the report) or before; each with a reason. */
function exclusionSentence(snap: ReportSnapshot): string {
  if (!snap.exclusions.length) return 'No cells were excluded.';
  const measured = new Set(snap.cells.filter((c) => c.runId !== null).map((c) => c.cellId));
  const after = snap.exclusions.filter((e) => measured.has(e.cellId)).length;
  const before = snap.exclusions.length - after;
  const parts: string[] = [];
  if (after) parts.push(`${plural(after, 'cell was', 'cells were')} excluded after measurement`);
  if (before) parts.push(`${plural(before, 'cell was', 'cells were')} excluded before ${before === 1 ? 'it was' : 'they were'} measured`);
  return `${parts.join(' and ')}, ${snap.exclusions.length === 1 ? 'with a recorded reason' : 'each with a recorded reason'} (listed in the exclusions table); excluded cells are left out of every summary and test.`;
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
