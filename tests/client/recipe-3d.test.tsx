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

function SpotsHarness({ seen }: { seen: (s: RecipeSettings) => void }) {
  const [s, setS] = useState<RecipeSettings>({ ...DEFAULT_RECIPE_SETTINGS, objects: { ...DEFAULT_RECIPE_SETTINGS.objects, enabled: true } });
  return <SettingsEditor value={s} onChange={(n) => (seen(n), setS(n))} />;
}

describe('recipe editor: the axial width of spots in 3D', () => {
  it('defaults to the lateral width in the specimen; σz in slices and the axial PSF width are checked against the shared bounds', async () => {
    const seen = vi.fn();
    render(<SpotsHarness seen={seen} />);
    const user = userEvent.setup();
    expect((screen.getByLabelText('As wide as across the plane') as HTMLInputElement).checked).toBe(true);
    expect(screen.getByText(/σz = σ × pixel size \/ z step slices\./)).toBeTruthy();
    await user.click(screen.getByLabelText('σz in slices'));
    expect((seen.mock.calls.at(-1)![0] as RecipeSettings).objects.axial).toEqual({ kind: 'slices', sigmaZ: 1 });
    const sz = screen.getByLabelText('σz (slices)');
    await user.clear(sz);
    await user.type(sz, '51');
    expect(messageOf(sz)).toMatch(/^σz \(slices\) must be .*got "51"$/);
    await user.clear(sz);
    await user.type(sz, '1.5');
    expect(messageOf(sz)).toBeNull();
    expect((seen.mock.calls.at(-1)![0] as RecipeSettings).objects.axial).toEqual({ kind: 'slices', sigmaZ: 1.5 });
    expect(screen.getByText(/σz = 1\.5 slices, whatever the z step\./)).toBeTruthy();
    await user.click(screen.getByLabelText('From the axial point-spread width'));
    const psf = screen.getByLabelText('Axial PSF width (µm)');
    await user.clear(psf);
    await user.type(psf, '0.6');
    await user.type(screen.getByLabelText('Z step (µm, empty: from each field)'), '0.3');
    const last = seen.mock.calls.at(-1)![0] as RecipeSettings;
    expect(last.objects.axial).toEqual({ kind: 'psf', psfDepthUm: 0.6, zStepUm: 0.3 });
    expect(RecipeSettings.safeParse(last).success).toBe(true);
    await user.click(screen.getByLabelText('As wide as across the plane'));
    expect((seen.mock.calls.at(-1)![0] as RecipeSettings).objects.axial).toBeNull();
  });
});
