/**
 * Reads a TIFF's channel list in the browser before uploading (only the header is read, with geotiff's
 * Blob source), so the microscopist can choose two channels. The server checks everything again.
 * Channel model matches server/images/decode.ts: OME-XML channels when present, else pages × samples.
 */
export interface FileChannels {
  width: number;
  height: number;
  channels: { index: number; name: string | null }[];
  sizeZ: number;
  bits: number;
  /** the header could not be read here; the server will say why on upload */
  problem: string | null;
}

function omeChannels(desc: string): { names: (string | null)[]; sizeZ: number } | null {
  if (!/<\s*(\w+:)?OME[\s>]/.test(desc)) return null;
  try {
    const doc = new DOMParser().parseFromString(desc, 'application/xml');
    const px = doc.getElementsByTagNameNS('*', 'Pixels')[0];
    if (!px) return null;
    const sizeC = Number(px.getAttribute('SizeC') ?? 1) || 1;
    const sizeZ = Number(px.getAttribute('SizeZ') ?? 1) || 1;
    const ch = Array.from(px.getElementsByTagNameNS('*', 'Channel'));
    return { names: Array.from({ length: sizeC }, (_, i) => ch[i]?.getAttribute('Name') || null), sizeZ };
  } catch {
    return null;
  }
}

export async function inspectTiff(file: File): Promise<FileChannels> {
  try {
    const head = new Uint8Array(await file.slice(0, 4).arrayBuffer());
    const bo = String.fromCharCode(head[0] ?? 0, head[1] ?? 0);
    if (file.size === 0) return { width: 0, height: 0, channels: [], sizeZ: 1, bits: 0, problem: 'the file is empty' };
    if (bo !== 'II' && bo !== 'MM') return { width: 0, height: 0, channels: [], sizeZ: 1, bits: 0, problem: 'not a TIFF image' };
    const { fromBlob } = await import('geotiff');
    const tiff = await fromBlob(file);
    const count = await tiff.getImageCount();
    const first = await tiff.getImage(0);
    const fd = first.getFileDirectory() as unknown as { loadValue?: (t: string) => Promise<unknown> };
    const desc = ((await fd.loadValue?.('ImageDescription').catch(() => null)) as string | null) ?? '';
    const ome = desc ? omeChannels(desc) : null;
    const base = { width: first.getWidth(), height: first.getHeight(), bits: first.getBitsPerSample(0), problem: null };
    if (ome && first.getSamplesPerPixel() === 1) {
      return { ...base, channels: ome.names.map((name, i) => ({ index: i + 1, name })), sizeZ: ome.sizeZ };
    }
    const channels: FileChannels['channels'] = [];
    for (let p = 0; p < Math.min(count, 64); p++) {
      const img = p === 0 ? first : await tiff.getImage(p);
      const spp = img.getSamplesPerPixel();
      const rgb = spp >= 3 && img.getFileDirectory().getValue('PhotometricInterpretation') === 2;
      for (let s = 0; s < spp; s++) channels.push({ index: channels.length + 1, name: rgb ? (['red', 'green', 'blue'][s] ?? null) : null });
    }
    return { ...base, channels, sizeZ: 1 };
  } catch (e) {
    return { width: 0, height: 0, channels: [], sizeZ: 1, bits: 0, problem: `the header could not be read here (${e instanceof Error ? e.message : String(e)})` };
  }
}

export function formatBytes(n: number) {
  if (n < 1024) return `${n} B`;
  if (n < 1024 ** 2) return `${(n / 1024).toFixed(1)} KB`;
  if (n < 1024 ** 3) return `${(n / 1024 ** 2).toFixed(1)} MB`;
  return `${(n / 1024 ** 3).toFixed(2)} GB`;
}
