/**
 * The two channel sources of a field: checks (bounded header reads) and decoding, without database or
 * store. The upload and label-import routes run this in the decoding thread (decode-pool.ts); reading a
 * stored field back (intake.ts loadFieldStack) calls it directly.
 */
import { checkChannel1, checkPairCompatible, decodeChannel, decodeChannels, ImageInputError, type ChannelCheck, type DecodeOptions, type PixelArray, type TiffInfo, type TiffInput } from './decode.js';

export interface SourceRef {
  /** a local file, or the file's bytes */
  input: TiffInput;
  originalName: string;
  /** 1-based channel inside that file */
  channel: number;
}

export interface DecodedStack {
  width: number;
  height: number;
  sizeZ: number;
  bitDepth: number;
  sampleFormat: 'uint' | 'float';
  ch1: PixelArray[];
  ch2: PixelArray[];
  info1: TiffInfo;
  info2: TiffInfo;
}

const sameInput = (a: TiffInput, b: TiffInput) => a === b;

/** Checks two sources without decoding pixels; throws ImageInputError with a message naming the channel. */
export async function checkSources(sources: SourceRef[], opts: DecodeOptions): Promise<[ChannelCheck, ChannelCheck]> {
  if (sources.length === 1) {
    const info = await checkChannel1(sources[0].input, sources[0].channel, `"${sources[0].originalName}"`, opts).then((c) => c.info);
    if (info.channelCount < 2) {
      throw new ImageInputError(`"${sources[0].originalName}" has only one channel; a field needs two: choose a file with two or more channels, or pair it with a second single-channel file`);
    }
    throw new ImageInputError(`only one channel of "${sources[0].originalName}" was chosen; a field needs two`, 400);
  }
  if (sources.length !== 2) throw new ImageInputError(`a field is made of exactly two channels; ${sources.length} were given`, 400);
  const [a, b] = sources;
  const label = (s: SourceRef, i: number) => `channel ${i} ("${s.originalName}", channel ${s.channel})`;
  const ca = await checkChannel1(a.input, a.channel, label(a, 1), opts);
  if (sameInput(a.input, b.input)) {
    if (ca.info.channelCount < 2) {
      throw new ImageInputError(`"${a.originalName}" has only one channel; a field needs two: choose a file with two or more channels, or pair it with a second single-channel file`);
    }
    if (a.channel === b.channel) throw new ImageInputError(`channel 1 and channel 2 are both channel ${a.channel} of "${a.originalName}"; choose two different channels`, 400);
  }
  const cb = await checkChannel1(b.input, b.channel, label(b, 2), opts);
  checkPairCompatible(ca, cb);
  return [ca, cb];
}

/** Decodes both channels (all z slices) of two sources; the same input twice is read once. */
export async function decodeSources(input1: TiffInput, c1: number, input2: TiffInput, c2: number, opts: DecodeOptions): Promise<DecodedStack> {
  if (sameInput(input1, input2)) {
    const d = await decodeChannels(input1, [c1, c2], opts);
    return { width: d.width, height: d.height, sizeZ: d.ch1.length, bitDepth: d.info.bitsPerSample, sampleFormat: d.info.sampleFormat, ch1: d.ch1, ch2: d.ch2, info1: d.info, info2: d.info };
  }
  const a = await decodeChannel(input1, c1, opts);
  const b = await decodeChannel(input2, c2, opts);
  if (a.width !== b.width || a.height !== b.height) throw new ImageInputError(`channel 2 is ${b.width}×${b.height} but channel 1 is ${a.width}×${a.height}; both channels of a field must have the same size`);
  const bits = a.slices[0] instanceof Uint8Array ? 8 : a.slices[0] instanceof Uint16Array ? 16 : 32;
  return { width: a.width, height: a.height, sizeZ: a.slices.length, bitDepth: bits, sampleFormat: a.slices[0] instanceof Float32Array ? 'float' : 'uint', ch1: a.slices, ch2: b.slices, info1: a.info, info2: b.info };
}

/** Every check, then the decode: what intake needs from the two files of a new field. */
export async function readSources(sources: SourceRef[], opts: DecodeOptions): Promise<DecodedStack> {
  await checkSources(sources, opts);
  const [s1, s2] = sources;
  return decodeSources(s1.input, s1.channel, s2.input, s2.channel, opts);
}
