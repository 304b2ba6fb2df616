/**
 * The command-line client of the Syntopy API, for scripts, with a personal API token:
 *
 *   npm run -s client -- upload --coverslip ID (--folder DIR | FILE.tif …) [--channels i,j]
 *   npm run -s client -- upload --study ID --sheet SHEET.csv
 *   npm run -s client -- run --recipe ID (--study | --condition | --coverslip | --field) ID [--no-wait]
 *   npm run -s client -- measurements --run ID [--out FILE]
 *
 * The token comes from SYNTOPY_TOKEN (or --token), the server from SYNTOPY_URL (or --server; default
 * http://localhost:3000). Exit codes as the `analyze` command uses them: 0 done; 2 bad input (a usage error,
 * or the server refused the request: 4xx) with one `error:` line; 1 failure (the server could not be reached
 * or failed, a run that failed or partly failed) with one line. Requests and answers are checked with the
 * shared schemas. A contract: command and option names and exit codes stay as they are.
 */
import { parseCsv } from '../../shared/format/csv.js';
import fs from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import type { ZodType } from 'zod';
import { StudyDetail } from '../../shared/schemas/studies.js';
import { UploadResponse, type UploadFieldPlan } from '../../shared/schemas/fields.js';
import { RunDetail } from '../../shared/schemas/runs.js';

/** Bad input: exit 2. */
export class UsageError extends Error {}
/** The command could not do its job (network, server failure, failed run): exit 1. */
export class Failure extends Error {}

export const CLIENT_USAGE = `usage: npm run -s client -- <command> [options]

commands:
  upload --coverslip ID (--folder DIR | FILE.tif …) [--channels i,j]
        upload TIFFs to a coverslip, each file one field from its channels i and j (default 1,2)
  upload --study ID --sheet SHEET.csv
        upload the fields of a sample sheet (CSV with a header: condition, coverslip, file, and optionally
        ch1, ch2, name); conditions and coverslips named in it are created when the study lacks them; file
        paths are relative to the sheet
  run --recipe ID (--study | --condition | --coverslip | --field) ID [--no-wait]
        start a run of a recipe version and wait for it with a progress bar (unless --no-wait)
  measurements --run ID [--out FILE]
        download a run's measurements as CSV (to stdout without --out)

options:
  --token TOKEN    a personal API token (default: $SYNTOPY_TOKEN); create one on the Account page
  --server URL     the Syntopy server (default: $SYNTOPY_URL, else http://localhost:3000)
  -h, --help       this text

exit codes: 0 done · 2 bad input or a request the server refused · 1 failure (server unreachable or failed,
a run that failed)`;

const OPTIONS = {
  token: { type: 'string' },
  server: { type: 'string' },
  coverslip: { type: 'string' },
  study: { type: 'string' },
  condition: { type: 'string' },
  field: { type: 'string' },
  folder: { type: 'string' },
  sheet: { type: 'string' },
  channels: { type: 'string' },
  recipe: { type: 'string' },
  run: { type: 'string' },
  out: { type: 'string' },
  'no-wait': { type: 'boolean' },
  help: { type: 'boolean', short: 'h' },
} as const;

export interface ClientIo {
  stdout: { write(s: string | Uint8Array): unknown };
  stderr: { write(s: string): unknown; isTTY?: boolean };
  env: Record<string, string | undefined>;
  /** between polls of a running run (tests shorten it) */
  pollMs?: number;
}

const idOf = (v: string | undefined, name: string) => {
  if (v === undefined) return undefined;
  if (!/^[1-9][0-9]{0,15}$/.test(v)) throw new UsageError(`--${name} must be a positive whole-number id, got ${JSON.stringify(v)}`);
  return Number(v);
};

class Api {
  constructor(
    private base: string,
    private token: string,
  ) {}
  async call<T>(method: string, p: string, opts: { json?: unknown; form?: FormData; schema?: ZodType<T> } = {}): Promise<{ res: Response; data: T }> {
    let res: Response;
    try {
      res = await fetch(`${this.base}/api${p}`, {
        method,
        headers: { authorization: `Bearer ${this.token}`, ...(opts.json !== undefined ? { 'content-type': 'application/json' } : {}) },
        body: opts.form ?? (opts.json !== undefined ? JSON.stringify(opts.json) : undefined),
      });
    } catch (e) {
      throw new Failure(`could not reach ${this.base}: ${(e as Error & { cause?: Error }).cause?.message ?? (e as Error).message}`);
    }
    if (!opts.schema) return { res, data: undefined as T };
    const text = await res.text();
    let body: unknown = null;
    try {
      body = text ? JSON.parse(text) : null;
    } catch {
      body = null;
    }
    if (res.status >= 400 && res.status !== 207) {
      const msg = (body as { error?: string } | null)?.error ?? `HTTP ${res.status}`;
      if (res.status < 500) throw new UsageError(`${method} ${p}: ${msg}`);
      throw new Failure(`${method} ${p}: ${msg}`);
    }
    const parsed = opts.schema.safeParse(body);
    if (!parsed.success) throw new Failure(`${method} ${p}: unexpected answer (${parsed.error.issues[0].path.join('.')}: ${parsed.error.issues[0].message})`);
    return { res, data: parsed.data };
  }
}

interface SheetRow {
  line: number;
  condition: string;
  coverslip: string;
  file: string;
  ch1: number;
  ch2: number;
  name?: string;
}

export function readSheet(file: string): SheetRow[] {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (e) {
    throw new UsageError(`cannot read the sample sheet ${file}: ${(e as Error).message}`);
  }
  const [head, ...rows] = parseCsv(text);
  if (!head) throw new UsageError(`the sample sheet ${file} is empty`);
  const cols = head.map((h) => h.trim().toLowerCase());
  for (const need of ['condition', 'coverslip', 'file']) if (!cols.includes(need)) throw new UsageError(`the sample sheet has no "${need}" column (columns: ${cols.join(', ')})`);
  if (!rows.length) throw new UsageError('the sample sheet has a header but no rows');
  const dir = path.dirname(file);
  return rows.map((r, i) => {
    const get = (c: string) => (cols.indexOf(c) >= 0 ? (r[cols.indexOf(c)] ?? '').trim() : '');
    const line = i + 2;
    const channel = (c: string, d: number) => {
      const v = get(c);
      if (v === '') return d;
      if (!/^[1-9][0-9]{0,3}$/.test(v)) throw new UsageError(`sample sheet line ${line}: ${c} must be a channel number from 1, got ${JSON.stringify(v)}`);
      return Number(v);
    };
    for (const c of ['condition', 'coverslip', 'file']) if (!get(c)) throw new UsageError(`sample sheet line ${line}: the ${c} is empty`);
    const f = path.resolve(dir, get('file'));
    if (!fs.existsSync(f)) throw new UsageError(`sample sheet line ${line}: no file ${f}`);
    return { line, condition: get('condition'), coverslip: get('coverslip'), file: f, ch1: channel('ch1', 1), ch2: channel('ch2', 2), name: get('name') || undefined };
  });
}

async function uploadFiles(api: Api, io: ClientIo, coverslipId: number, files: { path: string; ch1: number; ch2: number; name?: string }[]) {
  // up to 20 files a request, so one refused file does not hold back the whole folder
  let stored = 0;
  const refused: string[] = [];
  for (let i = 0; i < files.length; i += 20) {
    const part = files.slice(i, i + 20);
    const form = new FormData();
    for (const f of part) form.append('files', await fs.openAsBlob(f.path), path.basename(f.path));
    const plan: UploadFieldPlan[] = part.map((f, k) => ({ name: f.name, ch1: { file: k, channel: f.ch1 }, ch2: { file: k, channel: f.ch2 } }));
    form.append('plan', JSON.stringify(plan));
    const { data } = await api.call('POST', `/coverslips/${coverslipId}/fields`, { form, schema: UploadResponse });
    for (const r of data.results) {
      if (r.ok) stored++;
      else refused.push(`${r.name}: ${r.error}`);
    }
    io.stderr.write(`uploaded ${Math.min(i + 20, files.length)} of ${files.length} files\n`);
  }
  return { stored, refused };
}

function tiffsIn(dir: string): string[] {
  let names: string[];
  try {
    names = fs.readdirSync(dir);
  } catch (e) {
    throw new UsageError(`cannot read the folder ${dir}: ${(e as Error).message}`);
  }
  const tiffs = names.filter((n) => /\.tiff?$/i.test(n)).sort().map((n) => path.join(dir, n));
  if (!tiffs.length) throw new UsageError(`the folder ${dir} holds no .tif or .tiff files`);
  return tiffs;
}

function bar(done: number, total: number) {
  const width = 30;
  const fill = total ? Math.round((done / total) * width) : 0;
  return `[${'#'.repeat(fill)}${'-'.repeat(width - fill)}] ${done}/${total} fields`;
}

export async function runClient(argv: string[], io: ClientIo): Promise<number> {
  try {
    const [command, ...rest] = argv;
    if (!command || command === '-h' || command === '--help') {
      io.stdout.write(CLIENT_USAGE + '\n');
      return command ? 0 : 2;
    }
    let values: { [K in keyof typeof OPTIONS]?: (typeof OPTIONS)[K]['type'] extends 'boolean' ? boolean : string };
    let positionals: string[];
    try {
      ({ values, positionals } = parseArgs({ args: rest, strict: true, allowPositionals: true, options: OPTIONS }));
    } catch (e) {
      throw new UsageError((e as Error).message);
    }
    if (values.help) {
      io.stdout.write(CLIENT_USAGE + '\n');
      return 0;
    }
    const token = values.token ?? io.env.SYNTOPY_TOKEN;
    if (!token) throw new UsageError('no API token: set SYNTOPY_TOKEN or pass --token (create one on the Account page)');
    const server = (values.server ?? io.env.SYNTOPY_URL ?? 'http://localhost:3000').replace(/\/+$/, '');
    if (!/^https?:\/\/[^/]+/.test(server)) throw new UsageError(`--server must be an http(s) address, got ${JSON.stringify(server)}`);
    const api = new Api(server, token);

    if (command === 'upload') {
      if (values.sheet) {
        const studyId = idOf(values.study, 'study');
        if (!studyId) throw new UsageError('upload --sheet needs --study ID');
        if (positionals.length || values.folder || values.coverslip) throw new UsageError('upload --sheet takes no files, --folder or --coverslip');
        const sheet = readSheet(values.sheet);
        let study = (await api.call('GET', `/studies/${studyId}`, { schema: StudyDetail })).data;
        const slipIds = new Map<string, number>();
        for (const r of sheet) {
          const k = `${r.condition}\u0000${r.coverslip}`;
          if (slipIds.has(k)) continue;
          let cond = study.conditions.find((c) => c.name === r.condition);
          if (!cond) {
            study = (await api.call('POST', `/studies/${studyId}/conditions`, { json: { name: r.condition }, schema: StudyDetail })).data;
            cond = study.conditions.find((c) => c.name === r.condition)!;
            io.stderr.write(`created condition "${r.condition}"\n`);
          }
          let slip = cond.coverslips.find((s) => s.name === r.coverslip);
          if (!slip) {
            study = (await api.call('POST', `/conditions/${cond.id}/coverslips`, { json: { name: r.coverslip }, schema: StudyDetail })).data;
            slip = study.conditions.find((c) => c.id === cond!.id)!.coverslips.find((s) => s.name === r.coverslip)!;
            io.stderr.write(`created coverslip "${r.coverslip}" in "${r.condition}"\n`);
          }
          slipIds.set(k, slip.id);
        }
        let stored = 0;
        const refused: string[] = [];
        for (const [k, id] of slipIds) {
          const rows = sheet.filter((r) => `${r.condition}\u0000${r.coverslip}` === k);
          const u = await uploadFiles(api, io, id, rows.map((r) => ({ path: r.file, ch1: r.ch1, ch2: r.ch2, name: r.name })));
          stored += u.stored;
          refused.push(...u.refused);
        }
        return finishUpload(io, stored, refused);
      }
      const coverslipId = idOf(values.coverslip, 'coverslip');
      if (!coverslipId) throw new UsageError('upload needs --coverslip ID with --folder DIR or files, or --study ID with --sheet SHEET.csv');
      const files = values.folder ? tiffsIn(values.folder) : positionals;
      if (values.folder && positionals.length) throw new UsageError('give --folder or files, not both');
      if (!files.length) throw new UsageError('nothing to upload: give --folder DIR or TIFF files');
      for (const f of files) if (!fs.existsSync(f)) throw new UsageError(`no file ${f}`);
      const ch = (values.channels ?? '1,2').split(',');
      if (ch.length !== 2 || !ch.every((c) => /^[1-9][0-9]{0,3}$/.test(c))) throw new UsageError(`--channels must be two channel numbers like 1,2, got ${JSON.stringify(values.channels)}`);
      const u = await uploadFiles(api, io, coverslipId, files.map((p) => ({ path: p, ch1: Number(ch[0]), ch2: Number(ch[1]) })));
      return finishUpload(io, u.stored, u.refused);
    }

    if (command === 'run') {
      const recipeId = idOf(values.recipe, 'recipe');
      if (!recipeId) throw new UsageError('run needs --recipe ID (a recipe version)');
      const scopes = (['study', 'condition', 'coverslip', 'field'] as const).filter((s) => values[s] !== undefined);
      if (scopes.length !== 1) throw new UsageError('run needs exactly one of --study, --condition, --coverslip or --field with an id');
      const scope = { kind: scopes[0], id: idOf(values[scopes[0]], scopes[0])! };
      let run = (await api.call('POST', '/runs', { json: { recipeId, scope }, schema: RunDetail })).data;
      io.stdout.write(`run ${run.id} started: ${run.recipe.name} v${run.recipe.version} on ${run.scope.kind} "${run.scope.name}"${run.provisional ? ' (provisional: the recipe is not approved)' : ''}\n`);
      if (values['no-wait']) return 0;
      let last = '';
      while (run.status === 'queued' || run.status === 'running') {
        const line = bar(run.fieldsDone, run.fieldsTotal);
        if (line !== last) io.stderr.write(io.stderr.isTTY ? `\r${line}` : `${line}\n`);
        last = line;
        await new Promise((r) => setTimeout(r, io.pollMs ?? 1000));
        run = (await api.call('GET', `/runs/${run.id}`, { schema: RunDetail })).data;
      }
      io.stderr.write(io.stderr.isTTY ? `\r${bar(run.fieldsDone, run.fieldsTotal)}\n` : `${bar(run.fieldsDone, run.fieldsTotal)}\n`);
      if (run.status !== 'done') {
        const failed = run.fields.filter((f) => f.status === 'failed');
        io.stderr.write(`error: run ${run.id} ${run.status === 'failed' ? 'failed' : 'partly failed'}: ${failed.map((f) => `${f.name}: ${f.error ?? 'no reason recorded'}`).join('; ')}\n`);
        return 1;
      }
      io.stdout.write(`run ${run.id} done: ${run.measurements} measurements\n`);
      return 0;
    }

    if (command === 'measurements') {
      const runId = idOf(values.run, 'run');
      if (!runId) throw new UsageError('measurements needs --run ID');
      const { res } = await api.call('GET', `/runs/${runId}/measurements.csv`);
      if (!res.ok) {
        const body = (await res.json().catch(() => null)) as { error?: string } | null;
        const msg = `GET /runs/${runId}/measurements.csv: ${body?.error ?? `HTTP ${res.status}`}`;
        if (res.status < 500) throw new UsageError(msg);
        throw new Failure(msg);
      }
      const out = values.out ? fs.createWriteStream(values.out) : null;
      let rows = -1;
      for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
        for (const b of chunk) if (b === 10) rows++;
        if (out) {
          if (!out.write(chunk)) await new Promise<void>((r) => out.once('drain', () => r()));
        } else io.stdout.write(chunk);
      }
      if (out) {
        await new Promise<void>((resolve, reject) => out.end((e?: Error | null) => (e ? reject(e) : resolve())));
        io.stderr.write(`${rows} measurements written to ${values.out}\n`);
      }
      return 0;
    }
    throw new UsageError(`unknown command ${JSON.stringify(command)}; commands: upload, run, measurements (see --help)`);
  } catch (e) {
    const line = (s: string) => s.replace(/\s*\n\s*/g, ' ');
    if (e instanceof UsageError) {
      io.stderr.write(`error: ${line(e.message)}\n`);
      return 2;
    }
    io.stderr.write(`error: ${e instanceof Failure ? '' : 'internal failure: '}${line(String((e as Error)?.message ?? e))}\n`);
    return 1;
  }
}

function finishUpload(io: ClientIo, stored: number, refused: string[]) {
  io.stdout.write(`${stored} field${stored === 1 ? '' : 's'} stored${refused.length ? `, ${refused.length} refused` : ''}\n`);
  if (refused.length) {
    io.stderr.write(`error: ${refused.length} file${refused.length === 1 ? ' was' : 's were'} refused: ${refused.join('; ')}\n`);
    return 2;
  }
  return 0;
}

// run when executed directly (not when imported by tests)
const isMain = /client\.ts$/.test(process.argv[1] ?? '');
if (isMain) {
  runClient(process.argv.slice(2), { stdout: process.stdout, stderr: process.stderr, env: process.env }).then((code) => {
    process.exitCode = code;
  });
}
