/**
 * The decoding threads take their tasks THREADS at a time through a `SlotGate`, so a task's time limit
 * (DECODE_TIMEOUT_MS) starts when a thread takes it, not while it waits behind others (decode-pool.ts).
 */
import { describe, expect, it } from 'vitest';
import { SlotGate } from '../../server/images/decode-pool.js';

describe('SlotGate (first come first served, at most `slots` at once)', () => {
  it('holds two at once; the others get a released slot in the order they asked', async () => {
    const g = new SlotGate(2);
    const got: number[] = [];
    const asks = [0, 1, 2, 3, 4].map((i) => g.acquire().then(() => got.push(i)));
    await Promise.resolve();
    await Promise.resolve();
    expect(got).toEqual([0, 1]);
    expect(g.state).toEqual({ held: 2, waiting: 3 });
    g.release();
    // a newcomer asking now waits behind the three that were already waiting
    const late = g.acquire().then(() => got.push(5));
    await asks[2];
    expect(got).toEqual([0, 1, 2]);
    expect(g.state).toEqual({ held: 2, waiting: 3 });
    // three hand-overs (3, 4, the newcomer), then a slot freed
    for (let k = 0; k < 4; k++) g.release();
    await Promise.all([...asks, late]);
    expect(got).toEqual([0, 1, 2, 3, 4, 5]);
    expect(g.state).toEqual({ held: 1, waiting: 0 });
    g.release();
    expect(g.state).toEqual({ held: 0, waiting: 0 });
  });
  it('refuses a release without a held slot and a bad slot count, quoting it', () => {
    expect(() => new SlotGate(0)).toThrow(/received 0/);
    expect(() => new SlotGate(2).release()).toThrow(/without a held slot/);
  });
});
