// @vitest-environment jsdom
/**
 * The recipe editor's 3-D settings: z "every slice, voxel by voxel (3D)" (the default) and the randomization
 * block depth for stacks measured in 3D (slices for pixel blocks; axial PSF width and z step for PSF blocks),
 * each checked against the shared BlockSizeSetting bounds; an empty box leaves the setting unset.
 */
import { useState } from 'react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, render } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { DEFAULT_RECIPE_SETTINGS, RecipeSettings } from '@shared/schemas/recipes';
import { SettingsEditor } from '@/features/recipes/components/SettingsEditor';

const messageOf = (box: HTMLElement) => {
  const id = box.getAttribute('aria-describedby');
  return id ? (document.getElementById(id)?.textContent ?? null) : null;
};

function Harness({ seen, start }: { seen: (s: RecipeSettings) => void; start: RecipeSettings['randomization']['blockSize'] }) {
  const [s, setS] = useState<RecipeSettings>({ ...DEFAULT_RECIPE_SETTINGS, randomization: { enabled: true, count: 200, blockSize: start } });
  return <SettingsEditor value={s} onChange={(n) => (seen(n), setS(n))} />;
}

afterEach(cleanup);

describe('recipe editor: 3-D settings', () => {
  it('the default z handling is every slice in 3D, offered first', () => {
    expect(DEFAULT_RECIPE_SETTINGS.z).toEqual({ mode: 'volume' });
    render(<Harness seen={() => {}} start={{ kind: 'pixels', pixels: 3 }} />);
    const radio = screen.getByLabelText('Every slice, voxel by voxel (3D)') as HTMLInputElement;
    expect(radio.checked).toBe(true);
  });
  it('pixel blocks: the depth in slices is a whole number from 1 to 256; empty leaves it unset', async () => {
    const seen = vi.fn();
    render(<Harness seen={seen} start={{ kind: 'pixels', pixels: 3 }} />);
    const user = userEvent.setup();
    const box = screen.getByLabelText('Depth in 3D (slices)');
    await user.type(box, '0');
    expect(messageOf(box)).toMatch(/^Block depth must be .*got "0"$/);
    await user.clear(box);
    await user.type(box, '2');
    expect(messageOf(box)).toBeNull();
    const last = seen.mock.calls.at(-1)![0] as RecipeSettings;
    expect(last.randomization.blockSize).toEqual({ kind: 'pixels', pixels: 3, slices: 2 });
    expect(RecipeSettings.safeParse(last).success).toBe(true);
    await user.clear(box);
    expect((seen.mock.calls.at(-1)![0] as RecipeSettings).randomization.blockSize).toEqual({ kind: 'pixels', pixels: 3, slices: undefined });
  });
  it('PSF blocks: the axial width and the z step (empty: each field) are positive', async () => {
    const seen = vi.fn();
    render(<Harness seen={seen} start={{ kind: 'psf', psfWidthUm: 0.25, pixelSizeUm: null }} />);
    const user = userEvent.setup();
    const depth = screen.getByLabelText('Axial PSF width in 3D (µm)');
    await user.type(depth, '0');
    expect(messageOf(depth)).toMatch(/^Axial PSF width must be greater than 0 .*got "0"$/);
    await user.clear(depth);
    await user.type(depth, '0.7');
    const step = screen.getByLabelText('Z step (µm, empty: from each field)');
    await user.type(step, '0.35');
    const last = seen.mock.calls.at(-1)![0] as RecipeSettings;
    expect(last.randomization.blockSize).toMatchObject({ kind: 'psf', psfDepthUm: 0.7, zStepUm: 0.35 });
    expect(RecipeSettings.safeParse(last).success).toBe(true);
  });
});
