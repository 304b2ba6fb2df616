import { percentiles } from '/work/main/server/images/preview.ts';
import sharp from 'sharp';
const size=2048;
const a = new Uint16Array(size*size).map((_, i) => (i * 7) & 0xffff);
for (let k=0;k<3;k++){
let t = performance.now();
const lap = (s: string) => { const n = performance.now(); console.log(s, (n - t).toFixed(1)); t = n; };
percentiles(a,[0.1,99.9]); lap('pct');
const raw = new Uint8Array(size*size*3);
for (let i=0;i<a.length;i++){ const v=(a[i]-10)*0.01+0.5; raw[i*3+1]= v<=0?0:v>=255?255:v;} lap('tobyte');
const png = await sharp(raw, { raw: { width: size, height: size, channels: 3 } }).png({ compressionLevel: 3 }).toBuffer(); lap('png ' + png.length);
const png2 = await sharp(raw, { raw: { width: size, height: size, channels: 3 } }).png({ compressionLevel: 1, adaptiveFiltering: false }).toBuffer(); lap('png1 ' + png2.length);
}
