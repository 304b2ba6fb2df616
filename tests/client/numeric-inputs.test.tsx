// @vitest-environment jsdom
/**
 * Numeric boxes refuse text and values outside the allowed range with a message quoting what was typed, and
 * keep the last valid value: the Pixel scatter thresholds (the region's data range) and a recipe setting
 * (the bounds of the shared RecipeSettings schema). The rule lives once in shared/schemas/common.ts NumberText.
 */
import { useState } from 'react';
import { describe, expect, it, vi } from 'vitest';
import { render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { ThresholdInputs } from '@/features/workspace/components/PixelScatter';
import { SettingsEditor } from '@/features/recipes/components/SettingsEditor';
import { DEFAULT_RECIPE_SETTINGS, RecipeSettings } from '@shared/schemas/recipes';
import { NumberText, readNumberText } from '@shared/schemas/common';

describe('NumberText (shared)', () => {
  it('takes plain numbers within bounds and quotes refused text', () => {
    const s = NumberText('T1', { min: 0, max: 4095 });
    expect(readNumberText(s, ' 12.5 ')).toEqual({ value: 12.5, error: null });
    expect(readNumberText(s, '1e3')).toEqual({ value: 1000, error: null });
    expect(readNumberText(s, 'abc').error).toBe('T1 must be a number between 0 and 4095, got "abc"');
    expect(readNumberText(s, '').error).toBe('T1 must be a number between 0 and 4095, got ""');
    expect(readNumberText(s, '0x10').error).toMatch(/must be a number/);
    expect(readNumberText(s, '5000').error).toBe('T1 must be between 0 and 4095, got "5000"');
    expect(readNumberText(s, '-1').error).toBe('T1 must be between 0 and 4095, got "-1"');
    expect(readNumberText(NumberText('Seed', { min: 0, integer: true }), '2.5').error).toBe('Seed must be a whole number, got "2.5"');
  });
});

describe('Pixel scatter threshold boxes', () => {
  it('refuse text and values outside the data range with a message; a valid pair is applied', async () => {
    const onChange = vi.fn();
    render(<ThresholdInputs t1={100} t2={200} range1={[0, 4095]} range2={[0, 1000]} onChange={onChange} />);
    const user = userEvent.setup();
    const t1 = screen.getByLabelText('Threshold T1 (channel 1)');
    const t2 = screen.getByLabelText('Threshold T2 (channel 2)');

    await user.clear(t1);
    await user.type(t1, 'bright');
    await user.tab();
    expect(screen.getByRole('alert').textContent).toBe('T1 must be a number between 0 and 4095, got "bright"');
    expect(t1.getAttribute('aria-invalid')).toBe('true');
    expect(onChange).not.toHaveBeenCalled();

    await user.clear(t1);
    await user.type(t1, '300');
    await user.clear(t2);
    await user.type(t2, '1200');
    await user.tab();
    expect(screen.getByRole('alert').textContent).toBe('T2 must be between 0 and 1000, got "1200"');
    // leaving T1 at 300 applied (300, 200); the refused T2 applied nothing
    expect(onChange.mock.calls).toEqual([[300, 200]]);

    await user.clear(t2);
    await user.type(t2, '750');
    await user.tab();
    expect(screen.queryByRole('alert')).toBeNull();
    expect(onChange.mock.calls).toEqual([[300, 200], [300, 750]]);
  });
});

describe('recipe settings editor', () => {
  function Harness({ seen }: { seen: (s: RecipeSettings) => void }) {
    const [s, setS] = useState<RecipeSettings>({ ...DEFAULT_RECIPE_SETTINGS, randomization: { ...DEFAULT_RECIPE_SETTINGS.randomization, enabled: true, count: 200 } });
    return (
      <SettingsEditor
        value={s}
        onChange={(n) => {
          seen(n);
          setS(n);
        }}
      />
    );
  }

  it('the scrambles box refuses text, fractions and counts beyond the schema bound, keeping the last valid count', async () => {
    const seen = vi.fn();
    render(<Harness seen={seen} />);
    const user = userEvent.setup();
    const box = screen.getByLabelText('Scrambles');
    const message = () => document.getElementById(box.getAttribute('aria-describedby') ?? '')?.textContent ?? null;

    await user.clear(box);
    await user.type(box, 'many');
    expect(message()).toBe('Scrambles must be a number between 1 and 10000, got "many"');
    await user.clear(box);
    await user.type(box, '20000');
    expect(message()).toBe('Scrambles must be between 1 and 10000, got "20000"');
    await user.clear(box);
    await user.type(box, '2.5');
    expect(message()).toBe('Scrambles must be a whole number, got "2.5"');
    // every refused text left the recipe at a count the shared schema accepts
    for (const [s] of seen.mock.calls) expect(RecipeSettings.safeParse(s).success).toBe(true);

    await user.clear(box);
    await user.type(box, '500');
    expect(message()).toBeNull();
    expect(box.getAttribute('aria-invalid')).toBe('false');
    expect(seen.mock.calls.at(-1)![0].randomization.count).toBe(500);
    expect((box as HTMLInputElement).value).toBe('500');
  });
});
