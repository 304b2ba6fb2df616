import fs from 'node:fs';
import { writeTiffU16 } from '/work/main/tests/images/tiffwrite.ts';
import { decodeChannels, readTiffInfo } from '/work/main/server/images/decode.ts';
import { channelFacts } from '/work/main/server/images/facts.ts';
import { percentiles } from '/work/main/server/images/preview.ts';
import sharp from 'sharp';
const size = 2048;
const a = new Uint16Array(size*size).map((_, i) => (i * 7) & 0xffff);
const b = new Uint16Array(size*size).map((_, i) => (i * 13) & 0xffff);
fs.writeFileSync('/tmp/b.tif', writeTiffU16([a, b], size, size));
for (let k = 0; k < 2; k++) {
let t = performance.now();
const lap = (s: string) => { const n = performance.now(); console.log(s, (n - t).toFixed(1)); t = n; };
await readTiffInfo('/tmp/b.tif'); lap('info');
const d = await decodeChannels('/tmp/b.tif', [1, 2]); lap('decode');
channelFacts(d.ch1, 65535); channelFacts(d.ch2, 65535); lap('facts');
percentiles(d.ch1[0], [0.1, 99.9]); lap('pct');
const raw = new Uint8Array(size*size*3);
const png = await sharp(raw, { raw: { width: size, height: size, channels: 3 } }).png({ compressionLevel: 3 }).toBuffer(); lap('png ' + png.length);
}
