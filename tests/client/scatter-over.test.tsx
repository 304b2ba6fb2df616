// @vitest-environment jsdom
/**
 * The Pixel scatter's choice on a stack (issue 16): every slice (3D) or the slice shown; while slices arrive a
 * progress bar counts them; a stack beyond the browser's limit (250 MB) says its size and the limit and that the
 * selected cell is read slice by slice, asking for a cell until one is chosen; the whole field of a stack with
 * more than 8 million voxels stays on the slice shown, which is said.
 */
import { describe, expect, it, vi } from 'vitest';
import { fireEvent, render, screen } from '@testing-library/react';
import { ScatterOver } from '@/features/workspace/components/ScatterOver';
import type { FieldDetail } from '@shared/schemas/fields';
import './utils';

const field = (sizeZ: number, width = 1024): FieldDetail =>
  ({ id: 4, width, height: 1024, sizeZ, bitDepth: 16, sampleFormat: 'uint' }) as FieldDetail;

describe('ScatterOver', () => {
  it('a stack that fits: the choice and the progress of the slices read', () => {
    const onOver = vi.fn();
    render(<ScatterOver field={field(32)} over="volume" onOver={onOver} progress={{ done: 12, total: 32 }} cellChosen={false} />);
    expect(screen.queryByTestId('volume-limit')).toBeNull();
    const bar = screen.getByRole('progressbar', { name: 'Slices read for the scatter' }) as HTMLProgressElement;
    expect([bar.value, bar.max]).toEqual([12, 32]);
    expect(screen.getByText('Reading slice 13 of 32…')).toBeTruthy();
    fireEvent.click(screen.getByRole('radio', { name: 'The slice shown' }));
    expect(onOver).toHaveBeenCalledWith('slice');
  });
  it('a large stack that fits: without a selected cell the whole field stays on the slice shown, and says why', () => {
    const { rerender } = render(<ScatterOver field={field(32)} over="volume" onOver={() => {}} progress={null} cellChosen={false} />);
    expect(screen.getByTestId('volume-whole-field').textContent).toBe(
      'The whole field has 33.6 million voxels, more than the 8 million previewed at once: without a selected cell the scatter covers the slice shown; a selected cell covers every slice.',
    );
    rerender(<ScatterOver field={field(32)} over="volume" onOver={() => {}} progress={null} cellChosen />);
    expect(screen.queryByTestId('volume-whole-field')).toBeNull();
    rerender(<ScatterOver field={field(5, 512)} over="volume" onOver={() => {}} progress={null} cellChosen={false} />);
    expect(screen.queryByTestId('volume-whole-field')).toBeNull();
  });
  it('no progress bar once every slice is in, or for the slice shown', () => {
    const { rerender } = render(<ScatterOver field={field(32)} over="volume" onOver={() => {}} progress={{ done: 32, total: 32 }} cellChosen />);
    expect(screen.queryByRole('progressbar')).toBeNull();
    rerender(<ScatterOver field={field(32)} over="slice" onOver={() => {}} progress={{ done: 3, total: 32 }} cellChosen />);
    expect(screen.queryByRole('progressbar')).toBeNull();
  });
  it('a stack beyond the limit states its size and the limit, and asks for a cell', () => {
    const { rerender } = render(<ScatterOver field={field(64)} over="volume" onOver={() => {}} progress={null} cellChosen={false} />);
    // 2 channels × 1024 × 1024 × 64 × 2 bytes
    expect(screen.getByTestId('volume-limit').textContent).toBe(
      'This stack is 268 MB, more than the 250 MB the browser holds at once, so over every slice the preview reads the selected cell’s voxels slice by slice; select a cell (until then the slice shown is used).',
    );
    rerender(<ScatterOver field={field(64)} over="volume" onOver={() => {}} progress={{ done: 0, total: 20 }} cellChosen />);
    expect(screen.getByTestId('volume-limit').textContent).toMatch(/slice by slice\.$/);
    expect(screen.getByText('Reading slice 1 of 20…')).toBeTruthy();
  });
});
