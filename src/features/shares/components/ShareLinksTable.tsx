/** The report's share links: who, state, expiry, last opening, with withdraw and send-again. */
import { useState } from 'react';
import { Badge, Button, ConfirmDialog, ErrorNotice, Loading } from '@/components';
import type { ShareLinkSummary } from '@shared/schemas/shares';
import { useShares } from '../api/useShares';
import { useRevokeShare } from '../api/useRevokeShare';
import { useResendShare } from '../api/useResendShare';
import { formatDateTime } from '@shared/format/datetime';

const TONE = { active: 'accent', revoked: 'danger', expired: 'neutral' } as const;
const STATE_WORD = { active: 'active', revoked: 'withdrawn', expired: 'expired' } as const;

export function ShareLinksTable({ reportId }: { reportId: number }) {
  const q = useShares(reportId);
  const revoke = useRevokeShare(reportId);
  const resend = useResendShare(reportId);
  const [confirm, setConfirm] = useState<ShareLinkSummary | null>(null);
  const [sent, setSent] = useState<number | null>(null);
  if (q.isPending) return <Loading label="Loading links…" />;
  if (q.isError) return <ErrorNotice error={q.error} />;
  if (!q.data.length) return <p className="text-sm text-ink-soft">Not shared yet.</p>;
  return (
    <div className="overflow-x-auto">
      <ErrorNotice error={resend.error} className="mb-2" />
      <table className="w-full text-left text-sm">
        <caption className="sr-only">Share links</caption>
        <thead className="border-b border-ink/15 text-xs text-ink-soft">
          <tr>
            <th className="py-1 pr-3">Recipient</th>
            <th className="py-1 pr-3">State</th>
            <th className="py-1 pr-3">Works until</th>
            <th className="py-1 pr-3">Last opened</th>
            <th className="py-1 pr-3 text-right">Openings</th>
            <th className="py-1">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {q.data.map((l) => (
            <tr key={l.id} className="border-b border-ink/5 align-top">
              <td className="py-1.5 pr-3">
                {l.email}
                {l.invited && <span className="ml-1 text-xs text-ink-soft">(study access)</span>}
              </td>
              <td className="py-1.5 pr-3">
                <Badge tone={TONE[l.state]}>{STATE_WORD[l.state]}</Badge>
              </td>
              <td className="py-1.5 pr-3">{formatDateTime(l.expiresAt)}</td>
              <td className="py-1.5 pr-3" title={l.openings[0] ? `${l.openings[0].ip ?? ''} ${l.openings[0].userAgent ?? ''}` : undefined}>
                {formatDateTime(l.lastOpenedAt)}
              </td>
              <td className="py-1.5 pr-3 text-right font-mono">{l.openCount}</td>
              <td className="py-1.5 text-right whitespace-nowrap">
                {l.state === 'active' && (
                  <>
                    <Button size="sm" variant="ghost" pending={resend.isPending && resend.variables === l.id} onClick={() => resend.mutate(l.id, { onSuccess: () => setSent(l.id) })}>
                      {sent === l.id ? 'Sent again' : 'Send again'}
                    </Button>
                    <Button size="sm" variant="ghost" className="text-danger" onClick={() => setConfirm(l)}>
                      Withdraw
                    </Button>
                  </>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <ConfirmDialog
        open={!!confirm}
        onClose={() => setConfirm(null)}
        title="Withdraw this link?"
        message={confirm ? `${confirm.email} will no longer be able to open the report with this link. This cannot be undone; you can share again later.` : ''}
        confirmLabel="Withdraw link"
        onConfirm={() => revoke.mutateAsync(confirm!.id)}
      />
    </div>
  );
}
