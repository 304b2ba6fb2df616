// @vitest-environment jsdom
/**
 * The projection caution in the recipe editor (and the read-only recipe page, the same component): shown
 * while z handling is a maximum-intensity projection (all slices, or a range), gone for one slice or 3D.
 * The wording is the shared PROJECTION_CAUTION, the same sentence the methods paragraph carries.
 */
import { useState } from 'react';
import { afterEach, describe, expect, it } from 'vitest';
import { cleanup, screen, render } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { DEFAULT_RECIPE_SETTINGS, PROJECTION_CAUTION, type RecipeSettings } from '@shared/schemas/recipes';
import { SettingsEditor } from '@/features/recipes/components/SettingsEditor';

function Harness() {
  const [s, setS] = useState<RecipeSettings>(DEFAULT_RECIPE_SETTINGS);
  return <SettingsEditor value={s} onChange={setS} />;
}

afterEach(cleanup);

describe('recipe editor: projection caution', () => {
  it('appears for a projection of all slices or of a range, and not for 3D or one slice', async () => {
    render(<Harness />);
    const user = userEvent.setup();
    expect(screen.queryByText(PROJECTION_CAUTION)).toBeNull();
    await user.click(screen.getByLabelText('Projection of all slices'));
    expect(screen.getByText(PROJECTION_CAUTION)).toBeTruthy();
    expect(screen.getByText('Projections can create false co-localization')).toBeTruthy();
    await user.click(screen.getByLabelText('Projection of a range'));
    expect(screen.getByText(PROJECTION_CAUTION)).toBeTruthy();
    await user.click(screen.getByLabelText('One slice'));
    expect(screen.queryByText(PROJECTION_CAUTION)).toBeNull();
  });

  it('a read-only recipe page with a projection shows it too', () => {
    render(<SettingsEditor value={{ ...DEFAULT_RECIPE_SETTINGS, z: { mode: 'mip' } }} readOnly />);
    expect(screen.getByText(PROJECTION_CAUTION)).toBeTruthy();
  });
});
