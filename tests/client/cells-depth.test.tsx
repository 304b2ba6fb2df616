// @vitest-environment jsdom
/**
 * The Cells list on a stack: each cell shows the slices it covers and its voxels (from the server's zRange and
 * voxelCount), and the selected drawn outline's slices A–B can be set (default every slice); the change goes
 * to the server as the outline's z range on the next save (common practice).
 */
import { describe, expect, it } from 'vitest';
import { fireEvent, render, screen } from '@testing-library/react';
import { CellsPanel } from '@/features/workspace/components/CellsPanel';
import { initialOutlineState, outlineReducer, planSave, type OutlineAction } from '@/features/workspace/lib/outlineState';
import type { Cell } from '@shared/schemas/cells';

const base = { fieldId: 1, role: 'cell' as const, source: 'drawn' as const, origin: { how: 'drawn' as const }, excluded: false, exclusionReason: null, createdAt: '2026-12-02T10:00:00.000Z' };
const cells: Cell[] = [
  { ...base, id: 1, name: 'Box', geometry: { kind: 'rect', x: 0, y: 0, width: 10, height: 10, z: [2, 4] }, pixelCount: 100, zRange: [2, 4], voxelCount: 300 },
  { ...base, id: 2, name: 'Blob', source: 'label_image', origin: { how: 'imported', file: 'l.tif', label: 3, edited: false }, geometry: { kind: 'label3d', label: 3, z: [1, 2], slices: [[0, 4], [1, 2]] }, pixelCount: 4, zRange: [1, 2], voxelCount: 6 },
];

describe('Cells list on a stack', () => {
  it('shows each cell’s slices and voxels', () => {
    const st = initialOutlineState(cells);
    render(<CellsPanel outlines={st.outlines} saved={st.saved} selected={null} dispatch={() => {}} canEdit={false} unsaved={new Set()} sizeZ={5} />);
    expect(screen.getAllByTestId('cell-depth').map((l) => l.textContent)).toEqual(['slices 2–4 · 300 voxels', 'slices 1–2 · 6 voxels']);
  });
  it('sets slices A–B of the selected outline; "All" goes back to every slice; the save sends the range', () => {
    const got: OutlineAction[] = [];
    const st = initialOutlineState(cells);
    render(<CellsPanel outlines={st.outlines} saved={st.saved} selected="c1" dispatch={(a) => got.push(a)} canEdit unsaved={new Set()} sizeZ={5} />);
    fireEvent.change(screen.getByLabelText('Last slice of Box'), { target: { value: '5' } });
    expect(got.at(-1)).toEqual({ type: 'set-z', key: 'c1', z: [2, 5] });
    // a backwards range is not applied
    const n = got.length;
    fireEvent.change(screen.getByLabelText('First slice of Box'), { target: { value: '6' } });
    expect(got.length).toBe(n);
    fireEvent.click(screen.getByRole('button', { name: 'All slices for Box' }));
    expect(got.at(-1)).toEqual({ type: 'set-z', key: 'c1', z: null });
    // a 3-D label cell has no slice controls
    expect(screen.queryByLabelText('First slice of Blob')).toBeNull();
  });
  it('the outline document applies the range and plans the update', () => {
    let st = initialOutlineState(cells);
    st = outlineReducer(st, { type: 'set-z', key: 'c1', z: [1, 3] });
    expect(planSave(st)).toEqual([{ op: 'update', key: 'c1', id: 1, body: { geometry: { kind: 'rect', x: 0, y: 0, width: 10, height: 10, z: [1, 3] } } }]);
    st = outlineReducer(st, { type: 'set-z', key: 'c1', z: null });
    expect(planSave(st)).toEqual([{ op: 'update', key: 'c1', id: 1, body: { geometry: { kind: 'rect', x: 0, y: 0, width: 10, height: 10 } } }]);
    // label cells keep their voxels
    expect(outlineReducer(st, { type: 'set-z', key: 'c2', z: [1, 1] }).outlines).toBe(st.outlines);
  });
});
