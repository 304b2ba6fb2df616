import { readTiffInfo, decodeChannels } from '/work/main/server/images/decode.ts';
for (const f of ['/tmp/t2.tif','/tmp/ome.tif']) {
  console.log(await readTiffInfo(f));
  const d = await decodeChannels(f,[1,2]);
  console.log(d.ch1.length, d.ch1[0].constructor.name, d.ch1[0][5], d.ch2[0][5], d.ch2.at(-1)![5]);
}
