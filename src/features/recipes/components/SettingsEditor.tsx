/**
 * The recipe settings form: one block per setting with its controls and, under them, the sentence that says
 * what the current value does (describeSetting, the same words the methods paragraph uses).
 */
import { BoxMessage, Caution, cx, inputClass, useNumberBox, type NumberBox } from '@/components';
import { NumberText, NumberTextFor } from '@shared/schemas/common';
import {
  BlockSizeSetting,
  COEFFICIENTS,
  COEFFICIENT_LABELS,
  DEFAULT_OBJECTS_SETTING,
  OBJECT_SETTING_KEYS,
  OBJECT_SETTING_LABELS,
  SETTING_KEYS,
  SETTING_LABELS,
  describeObjectSetting,
  describeSetting,
  projectionCaution,
  type ObjectSettingKey,
  type ObjectsSetting,
  type RecipeSettings,
  type SettingKey,
} from '@shared/schemas/recipes';

type Props = { value: RecipeSettings; onChange?: (s: RecipeSettings) => void; readOnly?: boolean };

function Choice<T extends string>({ name, value, options, onChange, disabled }: { name: string; value: T; options: [T, string][]; onChange: (v: T) => void; disabled?: boolean }) {
  return (
    <div role="radiogroup" className="flex flex-wrap gap-2">
      {options.map(([v, label]) => (
        <label key={v} className={cx('flex cursor-pointer items-center gap-1.5 rounded-md border px-2.5 py-1 text-sm', value === v ? 'border-accent bg-accent-soft text-accent-dark' : 'border-ink/15')}>
          <input type="radio" name={name} value={v} checked={value === v} disabled={disabled} onChange={() => onChange(v)} />
          {label}
        </label>
      ))}
    </div>
  );
}

/**
 * A numeric setting: the typed text is checked (shared NumberText: a number within the setting's bounds, whole
 * when step is 1); a refused text stays in the box with a message and the recipe keeps its last valid value.
 */
function Num({ label, value, onChange, disabled, step = 'any', min, max, minExclusive }: { label: string; value: number; onChange: (n: number) => void; disabled?: boolean; step?: string; min?: number; max?: number; minExclusive?: boolean }) {
  const box = useNumberBox({ schema: NumberText(label, { min, max, minExclusive, integer: step === '1' }), value, onChange });
  return <NumField label={label} box={box} disabled={disabled} inputMode={step === '1' ? 'numeric' : 'decimal'} />;
}

/** The layout of a numeric setting: its label and box on one line, the message under them. */
function NumField({ label, box, disabled, inputMode }: { label: string; box: NumberBox; disabled?: boolean; inputMode: 'numeric' | 'decimal' }) {
  return (
    <div className="text-sm">
      <label className="flex items-center gap-2">
        <span className="text-ink-soft">{label}</span>
        <input className={cx(inputClass(!!box.error), 'w-28')} inputMode={inputMode} disabled={disabled} {...box.input} />
      </label>
      <BoxMessage box={box} className="mt-1 text-xs text-danger" />
    </div>
  );
}

/**
 * The recipe's own pixel size for PSF-sized blocks: empty means "each field's pixel size"; typed text is checked
 * against the shared schema's bound (NumberTextFor); a refused text stays in the box with a message and the
 * recipe keeps its last valid value.
 */
const PIXEL_SIZE = NumberTextFor('Pixel size', BlockSizeSetting.options[1].shape.pixelSizeUm.unwrap().unwrap());
function PixelSizeBox({ value, onChange, disabled }: { value: number | null; onChange: (n: number | null) => void; disabled?: boolean }) {
  const box = useNumberBox({ schema: PIXEL_SIZE, value, onChange, emptyIsNull: true });
  return <NumField label="Pixel size (µm, empty: from each field)" box={box} disabled={disabled} inputMode="decimal" />;
}

/** The objects section: on/off, then one row per part with its controls and its own sentence. */
function ObjectsControls({ value: o, onChange, disabled: d }: { value: ObjectsSetting; onChange: (o: ObjectsSetting) => void; disabled?: boolean }) {
  const set = (patch: Partial<ObjectsSetting>) => onChange({ ...o, ...patch });
  const parts: Record<ObjectSettingKey, React.ReactNode> = {
    scale: (
      <div className="flex flex-wrap items-center gap-4">
        <Choice
          name="spotScale"
          disabled={d}
          value={o.scale.kind}
          options={[
            ['pixels', 'σ in pixels'],
            ['psf', 'From the point-spread width'],
          ]}
          onChange={(k) => set({ scale: k === 'pixels' ? { kind: 'pixels', sigmaPx: 1.5 } : { kind: 'psf', psfWidthUm: 0.25, pixelSizeUm: null } })}
        />
        {o.scale.kind === 'pixels' ? (
          <Num label="σ (px)" disabled={d} min={0} minExclusive max={50} value={o.scale.sigmaPx} onChange={(n) => set({ scale: { kind: 'pixels', sigmaPx: n } })} />
        ) : (
          (() => {
            const b = o.scale;
            return (
              <>
                <Num label="PSF width (µm)" disabled={d} min={0} minExclusive max={100} value={b.psfWidthUm} onChange={(n) => set({ scale: { ...b, psfWidthUm: n } })} />
                <PixelSizeBox disabled={d} value={b.pixelSizeUm} onChange={(n) => set({ scale: { ...b, pixelSizeUm: n } })} />
              </>
            );
          })()
        )}
      </div>
    ),
    axial: (
      <div className="flex flex-wrap items-center gap-4">
        <Choice
          name="spotAxial"
          disabled={d}
          value={o.axial === null ? 'lateral' : o.axial.kind}
          options={[
            ['lateral', 'As wide as across the plane'],
            ['slices', 'σz in slices'],
            ['psf', 'From the axial point-spread width'],
          ]}
          onChange={(k) => set({ axial: k === 'lateral' ? null : k === 'slices' ? { kind: 'slices', sigmaZ: 1 } : { kind: 'psf', psfDepthUm: 0.7, zStepUm: null } })}
        />
        {o.axial?.kind === 'slices' && (
          <Num label="σz (slices)" disabled={d} min={0} minExclusive max={50} value={o.axial.sigmaZ} onChange={(n) => set({ axial: { kind: 'slices', sigmaZ: n } })} />
        )}
        {o.axial?.kind === 'psf' &&
          (() => {
            const a = o.axial;
            return (
              <>
                <Num label="Axial PSF width (µm)" disabled={d} min={0} minExclusive max={1000} value={a.psfDepthUm} onChange={(n) => set({ axial: { ...a, psfDepthUm: n } })} />
                <OptionalBox label="Z step (µm, empty: from each field)" schema={Z_STEP} disabled={d} value={a.zStepUm} onChange={(n) => set({ axial: { ...a, zStepUm: n } })} />
              </>
            );
          })()}
      </div>
    ),
    k: <Num label="k" disabled={d} min={0} minExclusive max={1000} value={o.k} onChange={(n) => set({ k: n })} />,
    minSeparationPx: (
      <div className="flex flex-wrap items-center gap-4">
        <label className="flex items-center gap-2 text-sm">
          <input type="checkbox" disabled={d} checked={o.minSeparationPx === null} onChange={(e) => set({ minSeparationPx: e.target.checked ? null : 3 })} />
          2σ
        </label>
        {o.minSeparationPx !== null && <Num label="Distance (px)" disabled={d} min={0} max={1000} value={o.minSeparationPx} onChange={(n) => set({ minSeparationPx: n })} />}
      </div>
    ),
    pairDistance: (
      <div className="flex flex-wrap items-center gap-4">
        <Choice
          name="pairDistance"
          disabled={d}
          value={o.pairDistance.kind}
          options={[
            ['pixels', 'd in pixels'],
            ['um', 'd in µm'],
          ]}
          onChange={(k) => set({ pairDistance: k === 'pixels' ? { kind: 'pixels', pixels: 2 } : { kind: 'um', um: 0.2, pixelSizeUm: null } })}
        />
        {o.pairDistance.kind === 'pixels' ? (
          <Num label="d (px)" disabled={d} min={0} max={1000} value={o.pairDistance.pixels} onChange={(n) => set({ pairDistance: { kind: 'pixels', pixels: n } })} />
        ) : (
          (() => {
            const p = o.pairDistance;
            return (
              <>
                <Num label="d (µm)" disabled={d} min={0} max={1000} value={p.um} onChange={(n) => set({ pairDistance: { ...p, um: n } })} />
                <PixelSizeBox disabled={d} value={p.pixelSizeUm} onChange={(n) => set({ pairDistance: { ...p, pixelSizeUm: n } })} />
              </>
            );
          })()
        )}
      </div>
    ),
    placements: <Num label="Placements" disabled={d} step="1" min={1} max={100_000} value={o.placements} onChange={(n) => set({ placements: Math.max(1, Math.round(n)) })} />,
    seed: <Num label="Seed" disabled={d} step="1" min={0} max={2 ** 32 - 1} value={o.seed} onChange={(n) => set({ seed: Math.max(0, Math.round(n)) })} />,
  };
  return (
    <div className="space-y-3">
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" disabled={d} checked={o.enabled} onChange={(e) => set({ enabled: e.target.checked })} />
        Detect spots and measure pairs within d
      </label>
      {o.enabled &&
        OBJECT_SETTING_KEYS.map((k) => (
          <div key={k} className="space-y-1 border-l-2 border-ink/10 pl-3">
            <div className="text-xs font-semibold uppercase tracking-wide text-ink-soft">{OBJECT_SETTING_LABELS[k]}</div>
            {parts[k]}
            <p className="text-sm text-ink-soft">{describeObjectSetting(k, o)}</p>
          </div>
        ))}
    </div>
  );
}

/**
 * The 3-D block depth settings (stacks measured voxel by voxel): empty means "not set" (a 3-D run with the
 * test on then fails with a message); the z step's empty means "each field's". Bounds from the shared schema.
 */
const BLOCK_SLICES = NumberTextFor('Block depth', BlockSizeSetting.options[0].shape.slices.unwrap());
const PSF_DEPTH = NumberTextFor('Axial PSF width', BlockSizeSetting.options[1].shape.psfDepthUm.unwrap());
const Z_STEP = NumberTextFor('Z step', BlockSizeSetting.options[1].shape.zStepUm.unwrap().unwrap());
function OptionalBox({ label, schema, value, onChange, disabled, integer }: { label: string; schema: typeof Z_STEP; value: number | null; onChange: (n: number | null) => void; disabled?: boolean; integer?: boolean }) {
  const box = useNumberBox({ schema, value, onChange, emptyIsNull: true });
  return <NumField label={label} box={box} disabled={disabled} inputMode={integer ? 'numeric' : 'decimal'} />;
}

export function SettingsEditor({ value: s, onChange, readOnly }: Props) {
  const set = (patch: Partial<RecipeSettings>) => onChange?.({ ...s, ...patch });
  const d = readOnly;
  const controls: Record<SettingKey, React.ReactNode> = {
    background: (
      <div className="space-y-2">
        <Choice
          name="background"
          disabled={d}
          value={s.background.method}
          options={[
            ['none', 'None'],
            ['constant', 'A fixed value per channel'],
            ['region', 'Mean of the marked background region'],
          ]}
          onChange={(m) => set({ background: m === 'constant' ? { method: 'constant', ch1: 0, ch2: 0 } : { method: m } })}
        />
        {s.background.method === 'constant' && (
          <div className="flex flex-wrap gap-4">
            <Num label="Channel 1" disabled={d} min={0} value={s.background.ch1} onChange={(n) => set({ background: { ...(s.background as { method: 'constant'; ch1: number; ch2: number }), ch1: n } })} />
            <Num label="Channel 2" disabled={d} min={0} value={s.background.ch2} onChange={(n) => set({ background: { ...(s.background as { method: 'constant'; ch1: number; ch2: number }), ch2: n } })} />
          </div>
        )}
      </div>
    ),
    calibration: (
      <Choice
        name="calibration"
        disabled={d}
        value={s.calibration}
        options={[
          ['none', 'As recorded'],
          ['approved', "Instrument's approved calibration"],
        ]}
        onChange={(v) => set({ calibration: v })}
      />
    ),
    saturation: (
      <Choice
        name="saturation"
        disabled={d}
        value={s.saturation}
        options={[
          ['keep', 'Keep and report'],
          ['exclude', 'Leave out'],
        ]}
        onChange={(v) => set({ saturation: v })}
      />
    ),
    threshold: (
      <div className="space-y-2">
        <Choice
          name="threshold"
          disabled={d}
          value={s.threshold.method}
          options={[
            ['none', 'None'],
            ['manual', 'Fixed values'],
            ['otsu', 'Otsu'],
            ['costes', 'Costes'],
          ]}
          onChange={(m) =>
            set({
              threshold:
                m === 'manual'
                  ? { method: 'manual', t1: 0, t2: 0 }
                  : m === 'costes'
                    ? { method: 'costes', regression: 'orthogonal', belowSet: 'either', stoppingRule: { kind: 'r_at_most', r: 0 } }
                    : { method: m },
            })
          }
        />
        {(s.threshold.method === 'otsu' || s.threshold.method === 'costes') && (
          <Choice
            name="thresholdScope"
            disabled={d}
            value={s.thresholdScope}
            options={[
              ['cell', 'For each cell'],
              ['field', 'Once per field, over all its cells'],
            ]}
            onChange={(v) => set({ thresholdScope: v })}
          />
        )}
        {s.threshold.method === 'manual' && (
          <div className="flex flex-wrap gap-4">
            <Num label="T1 (channel 1)" disabled={d} value={s.threshold.t1} onChange={(n) => set({ threshold: { ...(s.threshold as { method: 'manual'; t1: number; t2: number }), t1: n } })} />
            <Num label="T2 (channel 2)" disabled={d} value={s.threshold.t2} onChange={(n) => set({ threshold: { ...(s.threshold as { method: 'manual'; t1: number; t2: number }), t2: n } })} />
          </div>
        )}
        {s.threshold.method === 'costes' &&
          (() => {
            const c = s.threshold;
            return (
              <div className="flex flex-wrap items-center gap-4">
                <label className="flex items-center gap-2 text-sm">
                  <span className="text-ink-soft">Regression line</span>
                  <select className={cx(inputClass(false), 'w-auto')} disabled={d} value={c.regression} onChange={(e) => set({ threshold: { ...c, regression: e.target.value as 'orthogonal' | 'ols' } })}>
                    <option value="orthogonal">Orthogonal</option>
                    <option value="ols">Least squares (y on x)</option>
                  </select>
                </label>
                <label className="flex items-center gap-2 text-sm">
                  <span className="text-ink-soft">Below means</span>
                  <select className={cx(inputClass(false), 'w-auto')} disabled={d} value={c.belowSet} onChange={(e) => set({ threshold: { ...c, belowSet: e.target.value as 'either' | 'both' } })}>
                    <option value="either">below either threshold</option>
                    <option value="both">below both thresholds</option>
                  </select>
                </label>
                <Num label="Stop when r ≤" disabled={d} min={-1} max={1} value={c.stoppingRule.r} onChange={(n) => set({ threshold: { ...c, stoppingRule: { kind: 'r_at_most', r: Math.max(-1, Math.min(1, n)) } } })} />
              </div>
            );
          })()}
      </div>
    ),
    randomization: (
      <div className="space-y-2">
        <label className="flex items-center gap-2 text-sm">
          <input type="checkbox" disabled={d} checked={s.randomization.enabled} onChange={(e) => set({ randomization: { ...s.randomization, enabled: e.target.checked } })} />
          Run the randomization test
        </label>
        {s.randomization.enabled && (
          <div className="flex flex-wrap items-center gap-4">
            <Num label="Scrambles" disabled={d} step="1" min={1} max={10_000} value={s.randomization.count} onChange={(n) => set({ randomization: { ...s.randomization, count: Math.max(1, Math.round(n)) } })} />
            <Choice
              name="block"
              disabled={d}
              value={s.randomization.blockSize.kind}
              options={[
                ['pixels', 'Block in pixels'],
                ['psf', 'From the point-spread width'],
              ]}
              onChange={(k) => set({ randomization: { ...s.randomization, blockSize: k === 'pixels' ? { kind: 'pixels', pixels: 3 } : { kind: 'psf', psfWidthUm: 0.25, pixelSizeUm: null } } })}
            />
            {s.randomization.blockSize.kind === 'pixels' ? (
              (() => {
                const b = s.randomization.blockSize;
                return (
                  <>
                    <Num label="Edge (px)" disabled={d} step="1" min={1} max={256} value={b.pixels} onChange={(n) => set({ randomization: { ...s.randomization, blockSize: { ...b, pixels: Math.max(1, Math.round(n)) } } })} />
                    <OptionalBox label="Depth in 3D (slices)" schema={BLOCK_SLICES} integer disabled={d} value={b.slices ?? null} onChange={(n) => set({ randomization: { ...s.randomization, blockSize: { ...b, slices: n == null ? undefined : Math.max(1, Math.round(n)) } } })} />
                  </>
                );
              })()
            ) : (
              (() => {
                const b = s.randomization.blockSize;
                return (
                  <>
                    <Num label="PSF width (µm)" disabled={d} min={0} minExclusive max={100} value={b.psfWidthUm} onChange={(n) => set({ randomization: { ...s.randomization, blockSize: { ...b, psfWidthUm: n } } })} />
                    <PixelSizeBox disabled={d} value={b.pixelSizeUm} onChange={(n) => set({ randomization: { ...s.randomization, blockSize: { ...b, pixelSizeUm: n } } })} />
                    <OptionalBox label="Axial PSF width in 3D (µm)" schema={PSF_DEPTH} disabled={d} value={b.psfDepthUm ?? null} onChange={(n) => set({ randomization: { ...s.randomization, blockSize: { ...b, psfDepthUm: n ?? undefined } } })} />
                    <OptionalBox label="Z step (µm, empty: from each field)" schema={Z_STEP} disabled={d} value={b.zStepUm ?? null} onChange={(n) => set({ randomization: { ...s.randomization, blockSize: { ...b, zStepUm: n } } })} />
                  </>
                );
              })()
            )}
          </div>
        )}
      </div>
    ),
    z: (
      <div className="space-y-2">
        <Choice
          name="z"
          disabled={d}
          value={s.z.mode}
          options={[
            ['volume', 'Every slice, voxel by voxel (3D)'],
            ['slice', 'One slice'],
            ['range', 'Projection of a range'],
            ['mip', 'Projection of all slices'],
          ]}
          onChange={(m) => set({ z: m === 'volume' ? { mode: 'volume' } : m === 'slice' ? { mode: 'slice', slice: 0 } : m === 'range' ? { mode: 'range', from: 0, to: 0 } : { mode: 'mip' } })}
        />
        {s.z.mode === 'slice' && <Num label="Slice (1 = first)" disabled={d} step="1" min={1} value={s.z.slice + 1} onChange={(n) => set({ z: { mode: 'slice', slice: Math.max(0, Math.round(n) - 1) } })} />}
        {s.z.mode === 'range' &&
          (() => {
            const z = s.z;
            return (
              <div className="flex flex-wrap gap-4">
                <Num label="From slice" disabled={d} step="1" min={1} max={z.to + 1} value={z.from + 1} onChange={(n) => set({ z: { ...z, from: Math.max(0, Math.round(n) - 1) } })} />
                <Num label="To slice" disabled={d} step="1" min={z.from + 1} value={z.to + 1} onChange={(n) => set({ z: { ...z, to: Math.max(0, Math.round(n) - 1) } })} />
              </div>
            );
          })()}
        {projectionCaution(s.z) && (
          <Caution title="Projections can create false co-localization" className="mt-2">
            {projectionCaution(s.z)}
          </Caution>
        )}
      </div>
    ),
    minCellPixels: <Num label="Fewest pixels" disabled={d} step="1" min={0} max={100_000_000} value={s.minCellPixels} onChange={(n) => set({ minCellPixels: Math.max(0, Math.round(n)) })} />,
    coefficients: (
      <div className="flex flex-wrap gap-x-4 gap-y-1">
        {COEFFICIENTS.map((c) => (
          <label key={c} className="flex items-center gap-1.5 text-sm">
            <input
              type="checkbox"
              disabled={d}
              checked={s.coefficients.includes(c)}
              onChange={(e) => set({ coefficients: e.target.checked ? COEFFICIENTS.filter((x) => x === c || s.coefficients.includes(x)) : s.coefficients.filter((x) => x !== c) })}
            />
            {COEFFICIENT_LABELS[c]}
          </label>
        ))}
      </div>
    ),
    mic: (
      <div className="flex flex-wrap gap-4">
        <Num label="Grid exponent α" disabled={d} min={0} minExclusive max={1} value={s.mic.alpha} onChange={(n) => set({ mic: { ...s.mic, alpha: n } })} />
        <Num label="Clump factor c" disabled={d} min={0} minExclusive max={100} value={s.mic.c} onChange={(n) => set({ mic: { ...s.mic, c: n } })} />
      </div>
    ),
    seed: <Num label="Seed" disabled={d} step="1" min={0} max={2 ** 32 - 1} value={s.seed} onChange={(n) => set({ seed: Math.max(0, Math.round(n)) })} />,
    objects: <ObjectsControls disabled={d} value={s.objects ?? DEFAULT_OBJECTS_SETTING} onChange={(o) => set({ objects: o })} />,
  };
  return (
    <div className="divide-y divide-ink/10">
      {SETTING_KEYS.map((k) => (
        <section key={k} className="grid gap-2 py-4 md:grid-cols-[12rem_1fr]" aria-labelledby={`setting-${k}`}>
          <h3 id={`setting-${k}`} className="text-sm font-semibold">
            {SETTING_LABELS[k]}
          </h3>
          <div className="space-y-2">
            {controls[k]}
            {(k !== 'objects' || !s.objects.enabled) && <p className="text-sm text-ink-soft">{describeSetting(k, s)}</p>}
          </div>
        </section>
      ))}
    </div>
  );
}
