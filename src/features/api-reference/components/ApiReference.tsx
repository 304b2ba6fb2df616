/** The API reference: every route of the OpenAPI document by resource, with who may call it and what it takes and answers. */
import { useMemo, useState } from 'react';
import type { ApiDocument, OperationObject } from '@shared/schemas/api-reference';
import { HTTP_METHODS } from '@shared/schemas/api-reference';
import { Badge } from '@/components/Badge';
import { TextField } from '@/components/TextField';
import { schemaOutline } from '../lib/schemaOutline';

type Entry = { method: string; path: string; op: OperationObject };

function entriesOf(doc: ApiDocument): Entry[] {
  return Object.entries(doc.paths).flatMap(([path, item]) => HTTP_METHODS.filter((m) => item[m]).map((m) => ({ method: m.toUpperCase(), path, op: item[m]! })));
}

function Shape({ label, schema, doc }: { label: string; schema: Record<string, unknown>; doc: ApiDocument }) {
  return (
    <div>
      <h4 className="text-xs font-semibold uppercase tracking-wide text-ink-soft">{label}</h4>
      <pre className="mt-1 max-h-80 overflow-auto rounded bg-ink/5 p-2 text-xs">{schemaOutline(schema, doc.components.schemas)}</pre>
    </div>
  );
}

function OperationView({ e, doc }: { e: Entry; doc: ApiDocument }) {
  const { op } = e;
  const body = op.requestBody ? Object.entries(op.requestBody.content)[0] : null;
  const success = Object.entries(op.responses).filter(([s]) => s.startsWith('2'));
  return (
    <details className="rounded border border-ink/10 bg-white/70">
      <summary className="flex cursor-pointer flex-wrap items-center gap-2 px-3 py-2">
        <Badge tone={e.method === 'GET' ? 'neutral' : e.method === 'DELETE' ? 'danger' : 'accent'}>{e.method}</Badge>
        <code className="text-sm">{e.path}</code>
        <span className="text-sm text-ink-soft">{op.summary}</span>
      </summary>
      <div className="flex flex-col gap-3 border-t border-ink/10 px-3 py-3 text-sm">
        <p>
          <span className="font-medium">Who may call it: </span>
          {op['x-permission'].text}
          {op.security && op.security.length === 1 && ' (cookie session only)'}
        </p>
        {op.parameters && op.parameters.length > 0 && (
          <table className="text-xs">
            <caption className="text-left text-xs font-semibold uppercase tracking-wide text-ink-soft">Parameters</caption>
            <thead>
              <tr className="text-left text-ink-soft">
                <th className="pr-3 font-medium">name</th>
                <th className="pr-3 font-medium">in</th>
                <th className="pr-3 font-medium">type</th>
              </tr>
            </thead>
            <tbody>
              {op.parameters.map((p) => (
                <tr key={`${p.in}-${p.name}`}>
                  <td className="pr-3 font-mono">
                    {p.name}
                    {p.required ? '' : '?'}
                  </td>
                  <td className="pr-3">{p.in}</td>
                  <td className="pr-3 font-mono">{schemaOutline(p.schema, doc.components.schemas)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
        {body && <Shape label={`Request body (${body[0]})`} schema={body[1].schema} doc={doc} />}
        {success.map(([status, r]) =>
          Object.entries(r.content ?? {}).map(([media, m]) => <Shape key={`${status}-${media}`} label={`Answer ${status} (${media})`} schema={m.schema} doc={doc} />),
        )}
      </div>
    </details>
  );
}

export function ApiReference({ doc }: { doc: ApiDocument }) {
  const [q, setQ] = useState('');
  const entries = useMemo(() => entriesOf(doc), [doc]);
  const needle = q.trim().toLowerCase();
  const shown = needle ? entries.filter((e) => `${e.method} ${e.path} ${e.op.summary}`.toLowerCase().includes(needle)) : entries;
  const groups = new Map<string, Entry[]>();
  for (const e of shown) {
    const tag = e.op.tags?.[0] ?? 'other';
    groups.set(tag, [...(groups.get(tag) ?? []), e]);
  }
  return (
    <div className="flex flex-col gap-4">
      <p className="text-sm text-ink-soft">
        {doc.info.description} The machine-readable document is at <a className="underline" href="/api/openapi.json">/api/openapi.json</a> (OpenAPI {doc.openapi}).
      </p>
      <TextField label="Find a route" value={q} onChange={(ev) => setQ(ev.target.value)} placeholder="path, method or words" />
      <p className="text-sm text-ink-soft" aria-live="polite">
        {shown.length} of {entries.length} routes
      </p>
      {[...groups].map(([tag, list]) => (
        <section key={tag} aria-labelledby={`api-${tag}`} className="flex flex-col gap-2">
          <h3 id={`api-${tag}`} className="font-semibold">
            /api/{tag}
          </h3>
          {list.map((e) => (
            <OperationView key={`${e.method} ${e.path}`} e={e} doc={doc} />
          ))}
        </section>
      ))}
    </div>
  );
}
