/** E-mail the report: addresses, a message, how long the links work, and optionally read access to the study. */
import { useState } from 'react';
import { ErrorNotice, FormDialog, TextArea, TextField } from '@/components';
import { ApiError } from '@/lib/api';
import { CreateShareRequest, DEFAULT_SHARE_DAYS, ShareEmail } from '@shared/schemas/shares';
import { NumberTextFor, readNumberText } from '@shared/schemas/common';
import { useCreateShare } from '../api/useCreateShare';

export const splitAddresses = (s: string) =>
  s
    .split(/[\s,;]+/)
    .map((x) => x.trim())
    .filter(Boolean);

/** The link lifetime box refuses what CreateShareRequest.expiresInDays refuses (whole days, 1 to the maximum). */
const DAYS = NumberTextFor('Links work for', CreateShareRequest.shape.expiresInDays.unwrap());

export function ShareDialog({ reportId, open, onClose }: { reportId: number; open: boolean; onClose: () => void }) {
  const [emails, setEmails] = useState('');
  const [message, setMessage] = useState('');
  const [days, setDays] = useState(String(DEFAULT_SHARE_DAYS));
  const [invite, setInvite] = useState(false);
  const daysChecked = readNumberText(DAYS, days);
  const share = useCreateShare(reportId);
  const err = share.error instanceof ApiError ? share.error : null;
  const [wrongAddresses, setWrongAddresses] = useState<string | null>(null);
  const serverEmailIssues = err?.issues.filter((i) => i.path.startsWith('emails')).map((i) => i.message) ?? [];
  const emailError = wrongAddresses ?? (serverEmailIssues.length ? serverEmailIssues.join('; ') : undefined);
  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    // name every wrong address at once, with the schema the server checks them with
    const wrong = splitAddresses(emails).filter((a) => !ShareEmail.safeParse(a).success);
    setWrongAddresses(wrong.length ? `${wrong.map((a) => JSON.stringify(a)).join(', ')} ${wrong.length === 1 ? 'is not an e-mail address' : 'are not e-mail addresses'} (like name@example.org)` : null);
    if (wrong.length || daysChecked.value === null) return;
    share.mutate({ emails: splitAddresses(emails), message, expiresInDays: daysChecked.value, inviteToStudy: invite }, { onSuccess: (r) => (r.notSent.length ? undefined : onClose()) });
  };
  return (
    <FormDialog
      open={open}
      onClose={onClose}
      title="Share by e-mail"
      description="Each person gets a personal link that opens this report read-only, without an account. You can withdraw a link at any time; every opening is recorded."
      submitLabel="Send links"
      pending={share.isPending}
      onSubmit={submit}
    >
      <TextArea label="E-mail addresses" hint="One or more, separated by commas or new lines." value={emails} onChange={(e) => (setEmails(e.target.value), setWrongAddresses(null))} rows={2} required error={emailError} data-autofocus />
      <TextArea label="Message" hint="Included in the e-mail (optional)." value={message} onChange={(e) => setMessage(e.target.value)} rows={3} maxLength={5000} />
      <TextField label="Links work for (days)" inputMode="numeric" value={days} onChange={(e) => setDays(e.target.value)} error={daysChecked.error ?? err?.fieldError('expiresInDays')} />
      <label className="flex items-start gap-2 text-sm">
        <input type="checkbox" className="mt-1" checked={invite} onChange={(e) => setInvite(e.target.checked)} />
        <span>
          Also give them a read-only account for this study
          <span className="block text-xs text-ink-soft">They can then see this study's fields, cells and reports, nothing else. New people get an invitation to choose a password.</span>
        </span>
      </label>
      {share.data && share.data.notSent.length > 0 && (
        <ErrorNotice error={`The links were made, but the e-mail to ${share.data.notSent.join(', ')} could not be sent. Close this and use "Send again" in the links table.`} />
      )}
      {share.error && !emailError && !err?.fieldError('expiresInDays') && <ErrorNotice error={share.error} />}
    </FormDialog>
  );
}
