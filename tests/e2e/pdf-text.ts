/**
 * Reads back the PDFs Chromium prints (page.pdf()): the page count, the document title and each page's text, so
 * browser tests can check a printed layout without a PDF library. Enough of ISO 32000-1 for Chromium's own
 * output: indirect objects, FlateDecode streams, the page tree, Type0/TrueType fonts with ToUnicode CMaps
 * (bfchar/bfrange, §9.10.3), and the text operators Tj, TJ, ', " with Td/TD/Tm/T* as word breaks (§9.4).
 * Not a general PDF reader: object streams, encryption and other filters are refused with a message.
 */
import zlib from 'node:zlib';

interface PdfObject {
  dict: string;
  stream: Buffer | null;
}

function parseObjects(pdf: Buffer): Map<number, PdfObject> {
  const text = pdf.toString('latin1');
  const objs = new Map<number, PdfObject>();
  const re = /(\d+)\s+0\s+obj\b/g;
  let m: RegExpExecArray | null;
  while ((m = re.exec(text))) {
    const start = m.index + m[0].length;
    const end = text.indexOf('endobj', start);
    if (end < 0) throw new Error(`PDF object ${m[1]} has no endobj`);
    const body = text.slice(start, end);
    const s = body.indexOf('stream');
    let dict = body, stream: Buffer | null = null;
    if (s >= 0 && /^\s*<</.test(body)) {
      dict = body.slice(0, s);
      let from = start + s + 'stream'.length;
      if (text[from] === '\r') from++;
      if (text[from] === '\n') from++;
      const len = /\/Length\s+(\d+)(\s+0\s+R)?/.exec(dict);
      if (!len) throw new Error(`PDF object ${m[1]}: a stream without /Length`);
      let n = Number(len[1]);
      if (len[2]) n = Number(/^\s*(\d+)/.exec(objBody(text, n))![1]);
      stream = pdf.subarray(from, from + n);
      const filter = /\/Filter\s*\/(\w+)/.exec(dict)?.[1];
      if (filter === 'FlateDecode') stream = zlib.inflateSync(stream);
      else if (filter) throw new Error(`PDF object ${m[1]}: filter ${filter} is not read here`);
      if (/\/Type\s*\/ObjStm/.test(dict)) throw new Error('PDF uses object streams, which are not read here');
    }
    objs.set(Number(m[1]), { dict, stream });
    re.lastIndex = end;
  }
  return objs;
}

function objBody(text: string, n: number) {
  const m = new RegExp(`\\b${n}\\s+0\\s+obj\\b`).exec(text);
  if (!m) throw new Error(`PDF object ${n} not found`);
  return text.slice(m.index + m[0].length);
}

const ref = (dict: string, key: string): number | null => {
  const m = new RegExp(`/${key}\\s+(\\d+)\\s+0\\s+R`).exec(dict);
  return m ? Number(m[1]) : null;
};

/** glyph code (hex, as written) → text, from a ToUnicode CMap */
function readCMap(cmap: string): { width: number; map: Map<number, string> } {
  const map = new Map<number, string>();
  const utf16 = (hex: string) => {
    let s = '';
    for (let i = 0; i + 4 <= hex.length; i += 4) s += String.fromCharCode(parseInt(hex.slice(i, i + 4), 16));
    return s;
  };
  let width = 2;
  const cs = /begincodespacerange\s*<([0-9a-fA-F]+)>/.exec(cmap);
  if (cs) width = cs[1].length / 2;
  for (const block of cmap.matchAll(/beginbfchar([\s\S]*?)endbfchar/g))
    for (const [, src, dst] of block[1].matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>/g)) map.set(parseInt(src, 16), utf16(dst));
  for (const block of cmap.matchAll(/beginbfrange([\s\S]*?)endbfrange/g))
    for (const [, lo, hi, rest] of block[1].matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>\s*(<[0-9a-fA-F]+>|\[[^\]]*\])/g)) {
      const a = parseInt(lo, 16), b = parseInt(hi, 16);
      if (rest.startsWith('[')) {
        const items = [...rest.matchAll(/<([0-9a-fA-F]+)>/g)].map((x) => x[1]);
        for (let c = a; c <= b; c++) map.set(c, utf16(items[c - a] ?? ''));
      } else {
        const base = rest.slice(1, -1);
        const last = parseInt(base.slice(-4), 16);
        for (let c = a; c <= b; c++) map.set(c, utf16(base.slice(0, -4)) + String.fromCharCode(last + c - a));
      }
    }
  return { width, map };
}

/** decodes a PDF literal string's escapes (§7.3.4.2) to its bytes */
function literalBytes(s: string): number[] {
  const out: number[] = [];
  for (let i = 0; i < s.length; i++) {
    const c = s[i];
    if (c !== '\\') {
      out.push(c.charCodeAt(0));
      continue;
    }
    const n = s[++i];
    const esc: Record<string, number> = { n: 10, r: 13, t: 9, b: 8, f: 12, '(': 40, ')': 41, '\\': 92 };
    if (n in esc) out.push(esc[n]);
    else if (/[0-7]/.test(n)) {
      let oct = n;
      while (oct.length < 3 && /[0-7]/.test(s[i + 1])) oct += s[++i];
      out.push(parseInt(oct, 8));
    }
  }
  return out;
}

function decodeString(bytes: number[], font: { width: number; map: Map<number, string> } | undefined): string {
  let s = '';
  const w = font?.width ?? 1;
  for (let i = 0; i + w <= bytes.length; i += w) {
    let code = 0;
    for (let k = 0; k < w; k++) code = code * 256 + bytes[i + k];
    s += font ? (font.map.get(code) ?? '') : String.fromCharCode(code);
  }
  return s;
}

function pageText(content: string, fonts: Map<string, { width: number; map: Map<number, string> }>): string {
  let out = '';
  let font: { width: number; map: Map<number, string> } | undefined;
  const tok = /\/([^\s/<>[\]()]+)\s+[-\d.]+\s+Tf|<([0-9a-fA-F\s]*)>|\(((?:\\.|[^\\)])*)\)|\b(Tj|TJ|'|"|Td|TD|Tm|T\*|ET)\b/g;
  let pending: string[] = [];
  let m: RegExpExecArray | null;
  while ((m = tok.exec(content))) {
    if (m[1] !== undefined) font = fonts.get(m[1]);
    else if (m[2] !== undefined) pending.push(decodeString((m[2].replace(/\s/g, '').match(/../g) ?? []).map((h) => parseInt(h, 16)), font));
    else if (m[3] !== undefined) pending.push(decodeString(literalBytes(m[3]), font));
    else if (m[4] === 'Tj' || m[4] === 'TJ' || m[4] === "'" || m[4] === '"') {
      out += pending.join('');
      pending = [];
    } else {
      pending = [];
      if (!out.endsWith(' ') && !out.endsWith('\n')) out += m[4] === 'ET' ? '\n' : ' ';
    }
  }
  return out.replace(/[ \t]+/g, ' ').replace(/ ?\n ?/g, '\n').trim();
}

export interface PdfText {
  pages: string[];
  title: string | null;
}

/** The text of each page (in drawing order) and the document title of a PDF printed by Chromium. */
export function readPdf(pdf: Buffer): PdfText {
  if (pdf.subarray(0, 5).toString('latin1') !== '%PDF-') throw new Error(`not a PDF: starts with ${JSON.stringify(pdf.subarray(0, 8).toString('latin1'))}`);
  const objs = parseObjects(pdf);
  const get = (n: number) => {
    const o = objs.get(n);
    if (!o) throw new Error(`PDF object ${n} is referenced but missing`);
    return o;
  };
  const catalog = [...objs.values()].find((o) => /\/Type\s*\/Catalog/.test(o.dict));
  if (!catalog) throw new Error('PDF without a catalog');
  const pages: number[] = [];
  const walk = (n: number) => {
    const o = get(n);
    if (/\/Type\s*\/Pages/.test(o.dict)) for (const k of /\/Kids\s*\[([^\]]*)\]/.exec(o.dict)![1].matchAll(/(\d+)\s+0\s+R/g)) walk(Number(k[1]));
    else pages.push(n);
  };
  walk(ref(catalog.dict, 'Pages')!);
  const fontCache = new Map<number, { width: number; map: Map<number, string> }>();
  const texts = pages.map((n) => {
    const page = get(n);
    let resources = page.dict;
    const resRef = ref(page.dict, 'Resources');
    if (resRef !== null) resources = get(resRef).dict;
    const fonts = new Map<string, { width: number; map: Map<number, string> }>();
    const fontDict = /\/Font\s*<<([\s\S]*?)>>/.exec(resources)?.[1] ?? (ref(resources, 'Font') !== null ? get(ref(resources, 'Font')!).dict : '');
    for (const [, name, num] of fontDict.matchAll(/\/([^\s/]+)\s+(\d+)\s+0\s+R/g)) {
      const id = Number(num);
      if (!fontCache.has(id)) {
        const tu = ref(get(id).dict, 'ToUnicode');
        fontCache.set(id, tu !== null ? readCMap(get(tu).stream!.toString('latin1')) : { width: 1, map: new Map() });
      }
      fonts.set(name, fontCache.get(id)!);
    }
    const contents = /\/Contents\s*\[([^\]]*)\]/.exec(page.dict)?.[1] ?? /\/Contents\s+(\d+\s+0\s+R)/.exec(page.dict)?.[1] ?? '';
    const content = [...contents.matchAll(/(\d+)\s+0\s+R/g)].map((c) => get(Number(c[1])).stream?.toString('latin1') ?? '').join('\n');
    return pageText(content, fonts);
  });
  const info = /\/Info\s+(\d+)\s+0\s+R/.exec(pdf.toString('latin1'));
  let title: string | null = null;
  if (info) {
    const d = get(Number(info[1])).dict;
    const hex = /\/Title\s*<([0-9a-fA-F]*)>/.exec(d);
    const lit = /\/Title\s*\(((?:\\.|[^\\)])*)\)/.exec(d);
    const bytes = hex ? (hex[1].match(/../g) ?? []).map((h) => parseInt(h, 16)) : lit ? literalBytes(lit[1]) : null;
    if (bytes) {
      if (bytes[0] === 0xfe && bytes[1] === 0xff) {
        title = '';
        for (let i = 2; i + 1 < bytes.length; i += 2) title += String.fromCharCode(bytes[i] * 256 + bytes[i + 1]);
      } else title = String.fromCharCode(...bytes);
    }
  }
  return { pages: texts, title };
}
