/** RFC 4180 CSV reading (quoted fields, doubled quotes, CRLF or LF), shared by the command-line client and the server. */

/** The non-blank records of a CSV text, each with the 1-based line it starts on. */
export function parseCsvRecords(text: string): { line: number; cells: string[] }[] {
  const out: { line: number; cells: string[] }[] = [];
  let row: string[] = [], f = '', q = false, line = 1, start = 1;
  const end = () => {
    row.push(f);
    if (row.some((c) => c.trim() !== '')) out.push({ line: start, cells: row });
    (row = []), (f = '');
  };
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (q) {
      if (ch === '"' && text[i + 1] === '"') (f += '"'), i++;
      else if (ch === '"') q = false;
      else {
        if (ch === '\n') line++;
        f += ch;
      }
    } else if (ch === '"') q = true;
    else if (ch === ',') row.push(f), (f = '');
    else if (ch === '\n' || ch === '\r') {
      if (ch === '\r' && text[i + 1] === '\n') i++;
      end();
      start = ++line;
    } else f += ch;
  }
  if (f !== '' || row.length) end();
  return out;
}

/** The non-blank rows of a CSV text. */
export function parseCsv(text: string): string[][] {
  return parseCsvRecords(text).map((r) => r.cells);
}
