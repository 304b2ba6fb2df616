/**
 * Thread that checks and decodes uploaded or imported image files (started by decode-pool.ts). Stateless:
 * it reads the given files or bytes and returns the decoded planes, transferred (not copied) back.
 * Only static imports in this graph: under `--import tsx` the thread loads it through the CommonJS hook,
 * where a dynamic import() would miss tsx's .js → .ts resolution.
 */
import { Piscina } from 'piscina';
import { decodeChannel, ImageInputError, type DecodeOptions, type PixelArray } from './decode.js';
import { readSources, type SourceRef } from './sources.js';
import { measureControlsBleed, measureFieldShift, type StoredFieldBytes } from './calibration-measure.js';

export type DecodeTask =
  | { kind: 'field'; sources: SourceRef[]; opts: DecodeOptions }
  | { kind: 'channel'; input: Uint8Array | string; channel: number; opts: DecodeOptions }
  /** measuring a calibration from stored fields (calibration-measure.ts): answers plain numbers */
  | { kind: 'shift'; field: StoredFieldBytes; maxShift: number; opts: DecodeOptions }
  | { kind: 'bleed'; fields: StoredFieldBytes[]; label: 1 | 2; align: { dx: number; dy: number } | null; opts: DecodeOptions };

/** A refusal travels as data: an Error's class and status do not survive the thread boundary. */
export type DecodeReply<T> = { ok: true; value: T } | { ok: false; message: string; status: number };

function transfer<T>(value: T, arrays: PixelArray[]) {
  const buffers = [...new Set(arrays.map((a) => a.buffer))];
  return Piscina.move({
    get [Piscina.transferableSymbol]() {
      return buffers;
    },
    get [Piscina.valueSymbol]() {
      return { ok: true, value };
    },
  } as never);
}

export default async function decodeTask(task: DecodeTask): Promise<unknown> {
  try {
    if (task.kind === 'field') {
      const stack = await readSources(task.sources, task.opts);
      return transfer(stack, [...stack.ch1, ...stack.ch2]);
    }
    if (task.kind === 'shift') return { ok: true, value: await measureFieldShift(task.field, task.maxShift, task.opts) };
    if (task.kind === 'bleed') return { ok: true, value: await measureControlsBleed(task.fields, task.label, task.align, task.opts) };
    const d = await decodeChannel(task.input, task.channel, task.opts);
    return transfer(d, d.slices);
  } catch (e) {
    if (e instanceof ImageInputError) return { ok: false, message: e.message, status: e.status } satisfies DecodeReply<never>;
    throw e;
  }
}
