/**
 * TIFF / OME-TIFF decoding shared by the intake routes and the `analyze` command.
 * CONTRACT (implementation owned by the image-intake work; keep these names and shapes):
 */
export type PixelArray = Uint8Array | Uint16Array | Uint32Array | Float32Array;

export interface TiffChannelInfo {
  /** 1-based channel index as the user names it */
  index: number;
  name: string | null;
}

export interface TiffInfo {
  width: number;
  height: number;
  bitsPerSample: number; // 8, 16, 32
  sampleFormat: 'uint' | 'float';
  /** number of channels available (pages × samples for plain TIFF; SizeC for OME) */
  channelCount: number;
  channels: TiffChannelInfo[];
  /** z slices (1 unless OME z-stack) */
  sizeZ: number;
  sizeT: number;
  pixelSizeUm: number | null;
  bigTiff: boolean;
  compression: string;
}

export interface DecodedPair {
  info: TiffInfo;
  width: number;
  height: number;
  /** one array per z slice for each channel; ch1[z].length === width*height */
  ch1: PixelArray[];
  ch2: PixelArray[];
}

/** Thrown for any bad input; `message` is a one-line, user-readable sentence quoting the value received. */
export class ImageInputError extends Error {
  constructor(message: string, public readonly status = 422) {
    super(message);
    this.name = 'ImageInputError';
  }
}

export declare function readTiffInfo(buf: Uint8Array): Promise<TiffInfo>;
/** channels are 1-based. */
export declare function decodeChannels(buf: Uint8Array, channels: [number, number]): Promise<DecodedPair>;
/** Decode channel `channel` (1-based) of a single file: all z slices. */
export declare function decodeChannel(buf: Uint8Array, channel: number): Promise<{ info: TiffInfo; slices: PixelArray[] }>;
