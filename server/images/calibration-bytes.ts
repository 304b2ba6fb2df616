/** A stored field's files read from the file store as private byte copies, ready to hand to a decoding thread. */
import type { AppContext } from '../context.js';
import type { StoredFieldBytes } from './calibration-measure.js';
import type { FieldRow } from './intake.js';
import { keyForSha } from './store.js';

export async function storedFieldBytes(ctx: AppContext, f: FieldRow): Promise<StoredFieldBytes> {
  const b1 = await ctx.store.get(keyForSha(f.file1Sha));
  const b2 = f.file2Sha === f.file1Sha ? null : await ctx.store.get(keyForSha(f.file2Sha));
  // copies: the store may hand out a slice of a shared buffer, and the copy is transferred to the thread
  return { name: f.name, bytes1: new Uint8Array(b1), bytes2: b2 ? new Uint8Array(b2) : null, channel1: f.channel1, channel2: f.channel2 };
}
