/**
 * Label images / masks that must match a field pixel for pixel (used by the cells label import).
 * All checks happen on the header before decoding: a TIFF, one channel, one plane, integer pixels, and
 * exactly the field's width × height.
 */
import { decodeChannel, ImageInputError, readTiffInfo, type DecodeOptions, type PixelArray, type TiffInput } from './decode.js';

export interface LabelImage {
  width: number;
  height: number;
  /** 0 = background, each positive value one cell */
  labels: Uint8Array | Uint16Array | Uint32Array;
}

/** Throws ImageInputError (422) when a mask's size differs from the field's, naming both sizes. */
export function checkMaskSize(mask: { width: number; height: number }, field: { width: number; height: number }, what = 'the label image') {
  if (mask.width !== field.width || mask.height !== field.height) {
    throw new ImageInputError(`${what} is ${mask.width}×${mask.height} but the field is ${field.width}×${field.height}; they must match pixel for pixel`, 422);
  }
}

/** Reads a label image for a field of the given size, checking everything before decoding. */
export async function readLabelImage(input: TiffInput, field: { width: number; height: number }, opts: DecodeOptions = {}): Promise<LabelImage> {
  const info = await readTiffInfo(input, opts);
  checkMaskSize({ width: info.channels[0]?.width ?? info.width, height: info.channels[0]?.height ?? info.height }, field);
  if (info.channelCount !== 1) throw new ImageInputError(`the label image has ${info.channelCount} channels; give a single-channel label image`, 422);
  if (info.sizeZ !== 1) throw new ImageInputError(`the label image has ${info.sizeZ} slices; give one 2-D label image`, 422);
  if (info.sampleFormat !== 'uint') throw new ImageInputError('the label image holds floating-point pixels; labels must be whole numbers (8, 16 or 32-bit unsigned)', 422);
  const d = await decodeChannel(input, 1, opts);
  const labels = d.slices[0] as PixelArray;
  return { width: d.width, height: d.height, labels: labels as LabelImage['labels'] };
}

export interface LabelStack {
  width: number;
  height: number;
  /** one label plane per z slice (a 2-D label image is a stack of one); a value is one cell across slices */
  slices: LabelImage['labels'][];
}

/**
 * Reads a label stack for a field of the given size: one channel whose pages (or OME / stated slices) are z
 * slices, integer pixels, every slice the field's width × height; the slice count is checked by the caller
 * (it depends on what is measured). Checked before decoding, like `readLabelImage`.
 */
export async function readLabelStack(input: TiffInput, field: { width: number; height: number }, opts: DecodeOptions = {}): Promise<LabelStack> {
  const o: DecodeOptions = { ...opts, pages: 'slices' };
  const info = await readTiffInfo(input, o);
  checkMaskSize({ width: info.channels[0]?.width ?? info.width, height: info.channels[0]?.height ?? info.height }, field);
  if (info.channelCount !== 1) throw new ImageInputError(`the label image has ${info.channelCount} channels; give a single-channel label image`, 422);
  if (info.sampleFormat !== 'uint') throw new ImageInputError('the label image holds floating-point pixels; labels must be whole numbers (8, 16 or 32-bit unsigned)', 422);
  const d = await decodeChannel(input, 1, o);
  if (d.slices.some((s) => s instanceof Float32Array)) throw new ImageInputError('the label image holds floating-point pixels; labels must be whole numbers (8, 16 or 32-bit unsigned)', 422);
  return { width: d.width, height: d.height, slices: d.slices as LabelImage['labels'][] };
}
