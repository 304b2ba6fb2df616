/**
 * Uploaded and imported files are checked and decoded in a separate thread (piscina) with a heap limit
 * (`DECODE_HEAP_MB`, V8 `resourceLimits`) and a time limit (`DECODE_TIMEOUT_MS`, counted from the moment a
 * thread takes the task: tasks wait their turn here, THREADS at a time, so waiting behind other uploads or
 * measurements on a loaded machine does not use up a task's time).
 * The bounded decoders and the decoded-bytes budget stop hostile files first; this is the second wall: if
 * the thread runs out of memory or time it is ended, the request gets a one-line 422 and the web server
 * keeps serving. Note that typed-array pixel buffers live outside the V8 heap; the decoded-bytes budget
 * (MAX_DECODED_BYTES) bounds those.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import type { AppContext } from '../context.js';
import { ImageInputError } from './errors.js';
import type { DecodeOptions, PixelArray, TiffInfo } from './decode.js';
import type { DecodeReply, DecodeTask } from './decode-worker.js';
import type { DecodedStack, SourceRef } from './sources.js';
import type { BleedMeasurement, ShiftMeasurement, StoredFieldBytes } from './calibration-measure.js';

const WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'decode-worker.ts');
/** Decoding threads at once; more uploads wait their turn (each may hold up to MAX_DECODED_BYTES). */
const THREADS = 2;

/**
 * At most `slots` holders at once, the others waiting first come first served; a released slot is handed
 * straight to the next waiter (so no newcomer can slip in between).
 */
export class SlotGate {
  private held = 0;
  private waiting: (() => void)[] = [];
  constructor(readonly slots: number) {
    if (!(Number.isInteger(slots) && slots >= 1)) throw new RangeError(`a gate needs a whole number of slots ≥ 1, received ${slots}`);
  }
  /** Resolves once the caller holds a slot. */
  acquire(): Promise<void> {
    if (this.held < this.slots) {
      this.held++;
      return Promise.resolve();
    }
    return new Promise<void>((r) => this.waiting.push(r));
  }
  release(): void {
    const next = this.waiting.shift();
    if (next) next();
    else if (this.held > 0) this.held--;
    else throw new Error('release() without a held slot');
  }
  /** slots held, callers waiting */
  get state(): { held: number; waiting: number } {
    return { held: this.held, waiting: this.waiting.length };
  }
}

export class DecodePool {
  private pool: Piscina;
  /** the tasks handed to the threads, THREADS at a time (the time limit starts when a task gets its slot) */
  private gate = new SlotGate(THREADS);
  constructor(private env: Pick<AppContext['env'], 'DECODE_HEAP_MB' | 'DECODE_TIMEOUT_MS' | 'PIXEL_BUDGET' | 'MAX_DECODED_BYTES'>) {
    this.pool = new Piscina({
      filename: WORKER_FILE,
      execArgv: ['--import', 'tsx'],
      minThreads: 0,
      maxThreads: THREADS,
      idleTimeout: 30_000,
      // geotiff's web-worker dependency destructures workerData when loaded in a thread: it must be an object
      workerData: {},
      resourceLimits: { maxOldGenerationSizeMb: env.DECODE_HEAP_MB, maxYoungGenerationSizeMb: Math.max(4, Math.min(64, Math.floor(env.DECODE_HEAP_MB / 8))) },
    });
    // a thread that dies between tasks has no request to answer; its replacement starts on demand
    this.pool.on('error', (e: Error) => console.warn(`[syntopy] a decoding thread ended: ${e.message}`));
  }

  get opts(): DecodeOptions {
    return { pixelBudget: this.env.PIXEL_BUDGET, maxDecodedBytes: this.env.MAX_DECODED_BYTES };
  }

  /** `per` names what the limits are per in a refusal ("decoding one upload", "one measurement"). */
  private async run<T>(task: DecodeTask, what: string, per = 'decoding one upload'): Promise<T> {
    let reply: DecodeReply<T>;
    try {
      const transferList =
        task.kind === 'channel' && typeof task.input !== 'string'
          ? [task.input.buffer as ArrayBuffer]
          : task.kind === 'shift' || task.kind === 'bleed'
            ? [...new Set((task.kind === 'shift' ? [task.field] : task.fields).flatMap((f) => [f.bytes1.buffer, f.bytes2?.buffer]).filter((b) => b !== undefined))] as ArrayBuffer[]
            : undefined;
      await this.gate.acquire();
      try {
        // a thread is free: the time limit starts now
        reply = await this.pool.run(task, { signal: AbortSignal.timeout(this.env.DECODE_TIMEOUT_MS), transferList });
      } finally {
        this.gate.release();
      }
    } catch (e) {
      const err = e as { name?: string; code?: string; message?: string };
      if (err?.name === 'AbortError') {
        throw new ImageInputError(`${what} took longer than the ${this.env.DECODE_TIMEOUT_MS} ms allowed for ${per} and was stopped`);
      }
      if (err?.code === 'ERR_WORKER_OUT_OF_MEMORY' || /exited with code/.test(String(err?.message))) {
        throw new ImageInputError(`${what} needed more than the ${this.env.DECODE_HEAP_MB} MB of memory allowed for ${per} and was stopped`);
      }
      throw e;
    }
    if (!reply.ok) throw new ImageInputError(reply.message, reply.status);
    return reply.value;
  }

  /** Checks and decodes the two channel sources of a new field. */
  readSources(sources: SourceRef[]): Promise<DecodedStack> {
    const names = [...new Set(sources.map((s) => `"${s.originalName}"`))].join(' and ');
    return this.run<DecodedStack>({ kind: 'field', sources, opts: this.opts }, `decoding ${names}`);
  }

  /** Decodes one channel (all z slices) of an imported file. */
  decodeChannel(input: Uint8Array, channel: number, name: string, pages?: DecodeOptions['pages']): Promise<{ info: TiffInfo; slices: PixelArray[]; width: number; height: number }> {
    // a private copy of the bytes is handed over (transferred) to the thread
    return this.run({ kind: 'channel', input: input.slice(), channel, opts: pages ? { ...this.opts, pages } : this.opts }, `decoding "${name}"`);
  }

  /**
   * A stored field's shift with its cross-correlation curves (calibration-measure.ts). The bytes are handed
   * over (transferred): pass private copies.
   */
  measureShift(field: StoredFieldBytes, maxShift: number): Promise<ShiftMeasurement> {
    return this.run({ kind: 'shift', field, maxShift, opts: this.opts }, `measuring the shift of "${field.name}"`, 'one measurement');
  }

  /** The bleed-through slope over single-label controls (bytes transferred, as above). */
  measureBleed(fields: StoredFieldBytes[], label: 1 | 2, align: { dx: number; dy: number } | null): Promise<BleedMeasurement> {
    return this.run({ kind: 'bleed', fields, label, align, opts: this.opts }, `measuring the bleed-through of ${fields.map((f) => `"${f.name}"`).join(', ')}`, 'one measurement');
  }

  close() {
    return this.pool.destroy();
  }
}

const pools = new WeakMap<AppContext, DecodePool>();

/** The decoding threads of an app context (started on first use, closed with the context). */
export function decodePoolOf(ctx: AppContext): DecodePool {
  let p = pools.get(ctx);
  if (!p) {
    const pool = new DecodePool(ctx.env);
    pools.set(ctx, pool);
    ctx.closers.push(() => pool.close());
    p = pool;
  }
  return p;
}
