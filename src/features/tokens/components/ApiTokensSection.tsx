/**
 * Personal API tokens on the Account page: create one (name, scope, lifetime), see its secret once with a copy
 * button, list the tokens with their last use, and revoke one after confirming.
 */
import { useId, useState } from 'react';
import { CreateTokenRequest, MAX_TOKEN_NAME, type CreatedToken, type TokenScope, type TokenSummary } from '@shared/schemas/tokens';
import { formatDateTime } from '@shared/format/datetime';
import { Badge, Button, Caution, ConfirmDialog, ErrorNotice, FieldShell, Loading, TextField, inputClass, serverErrors, validate, type FieldErrors } from '@/components';
import { useTokens } from '../api/useTokens';
import { useCreateToken } from '../api/useCreateToken';
import { useRevokeToken } from '../api/useRevokeToken';

const LIFETIMES = [7, 30, 90, 180, 365] as const;
const SCOPE_WORDS: Record<TokenScope, string> = {
  read: 'Read only: look at studies, results and exports',
  write: 'Read and change: also upload, edit and start runs',
};
const TONE = { active: 'accent', revoked: 'danger', expired: 'neutral' } as const;

export function ApiTokensSection() {
  return (
    <div className="flex flex-col gap-5">
      <p className="text-sm text-ink-soft">
        A token lets a script use Syntopy as you, with <code className="font-mono text-xs">Authorization: Bearer syt_…</code>. It can do what you can do
        (read-only tokens cannot change anything) until it expires, you revoke it, or your password changes. Tokens cannot create other tokens.
      </p>
      <CreateTokenForm />
      <TokenList />
    </div>
  );
}

function CreateTokenForm() {
  const create = useCreateToken();
  const [name, setName] = useState('');
  const [scope, setScope] = useState<TokenScope>('read');
  const [days, setDays] = useState<number>(90);
  const [errors, setErrors] = useState<FieldErrors>({});
  const [created, setCreated] = useState<CreatedToken | null>(null);
  const scopeId = useId();
  const daysId = useId();
  const shown = { ...serverErrors(create.error, ['name', 'scope', 'expiresInDays']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(CreateTokenRequest, { name, scope, expiresInDays: days });
    setErrors(v.ok ? {} : v.errors);
    if (!v.ok) return create.reset();
    setCreated(null);
    create.mutate(v.data, {
      onSuccess: (r) => {
        setCreated(r);
        setName('');
      },
    });
  };

  return (
    <>
      <form onSubmit={submit} noValidate aria-label="Create an API token" className="flex flex-col gap-3">
        <TextField label="Token name" value={name} onChange={(e) => setName(e.target.value)} error={shown.name} hint={`What it is for, e.g. "nightly upload script" (at most ${MAX_TOKEN_NAME} characters).`} />
        <div className="grid gap-3 sm:grid-cols-2">
          <FieldShell id={scopeId} label="Scope" error={shown.scope}>
            <select id={scopeId} className={inputClass(!!shown.scope)} value={scope} onChange={(e) => setScope(e.target.value as TokenScope)}>
              <option value="read">{SCOPE_WORDS.read}</option>
              <option value="write">{SCOPE_WORDS.write}</option>
            </select>
          </FieldShell>
          <FieldShell id={daysId} label="Works for" error={shown.expiresInDays}>
            <select id={daysId} className={inputClass(!!shown.expiresInDays)} value={days} onChange={(e) => setDays(Number(e.target.value))}>
              {LIFETIMES.map((d) => (
                <option key={d} value={d}>
                  {d} days
                </option>
              ))}
            </select>
          </FieldShell>
        </div>
        {shown._form && <ErrorNotice error={shown._form} />}
        <div>
          <Button type="submit" variant="primary" pending={create.isPending}>
            Create token
          </Button>
        </div>
      </form>
      {created && <NewTokenNotice created={created} onDone={() => setCreated(null)} />}
    </>
  );
}

/** The secret, shown once. */
function NewTokenNotice({ created, onDone }: { created: CreatedToken; onDone: () => void }) {
  const [copy, setCopy] = useState<'idle' | 'copied' | 'failed'>('idle');
  const copyToken = async () => {
    try {
      await navigator.clipboard.writeText(created.token);
      setCopy('copied');
    } catch {
      setCopy('failed');
    }
  };
  return (
    <Caution title={`Your new token "${created.summary.name}"`}>
      <p>Copy it now and keep it like a password: it will not be shown again. Anyone who has it can act as you within its scope until {formatDateTime(created.summary.expiresAt)}.</p>
      <div className="mt-2 flex flex-wrap items-center gap-2">
        <code aria-label="New API token" className="rounded border border-ink/15 bg-white px-2 py-1 font-mono text-xs break-all select-all">
          {created.token}
        </code>
        <Button size="sm" onClick={copyToken}>
          {copy === 'copied' ? 'Copied' : 'Copy'}
        </Button>
        <Button size="sm" variant="ghost" onClick={onDone}>
          I have stored it
        </Button>
      </div>
      {copy === 'failed' && <p className="mt-1 text-xs text-danger">The browser did not allow copying; select the token and copy it by hand.</p>}
    </Caution>
  );
}

function TokenList() {
  const q = useTokens();
  const revoke = useRevokeToken();
  const [confirm, setConfirm] = useState<TokenSummary | null>(null);
  if (q.isPending) return <Loading label="Loading tokens…" />;
  if (q.isError) return <ErrorNotice error={q.error} />;
  if (!q.data.length) return <p className="text-sm text-ink-soft">No API tokens yet.</p>;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-left text-sm">
        <caption className="sr-only">Your API tokens</caption>
        <thead className="border-b border-ink/15 text-xs text-ink-soft">
          <tr>
            <th className="py-1 pr-3">Name</th>
            <th className="py-1 pr-3">Scope</th>
            <th className="py-1 pr-3">State</th>
            <th className="py-1 pr-3">Created</th>
            <th className="py-1 pr-3">Works until</th>
            <th className="py-1 pr-3">Last used</th>
            <th className="py-1">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {q.data.map((tk) => (
            <tr key={tk.id} className="border-b border-ink/5 align-top">
              <td className="py-1.5 pr-3">
                {tk.name}
                <span className="ml-1 font-mono text-xs text-ink-soft">{tk.hint}…</span>
              </td>
              <td className="py-1.5 pr-3">{tk.scope === 'read' ? 'read' : 'read and write'}</td>
              <td className="py-1.5 pr-3">
                <Badge tone={TONE[tk.state]}>{tk.state}</Badge>
              </td>
              <td className="py-1.5 pr-3">{formatDateTime(tk.createdAt)}</td>
              <td className="py-1.5 pr-3">{tk.revokedAt ? `revoked ${formatDateTime(tk.revokedAt)}` : formatDateTime(tk.expiresAt)}</td>
              <td className="py-1.5 pr-3">{tk.lastUsedAt ? formatDateTime(tk.lastUsedAt) : 'never'}</td>
              <td className="py-1.5 text-right">
                {tk.state !== 'revoked' && (
                  <Button size="sm" variant="quietDanger" onClick={() => setConfirm(tk)} aria-label={`Revoke ${tk.name}`}>
                    Revoke
                  </Button>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <ConfirmDialog
        open={!!confirm}
        onClose={() => setConfirm(null)}
        title="Revoke this token?"
        message={confirm ? `Scripts using "${confirm.name}" (${confirm.hint}…) will be refused from now on. This cannot be undone; you can create a new token.` : ''}
        confirmLabel="Revoke token"
        onConfirm={() => revoke.mutateAsync(confirm!.id)}
      />
    </div>
  );
}
