/** Route module: the report a share link opens, read-only and without the app's frame or an account. */
import { useEffect } from 'react';
import { useParams } from 'react-router';
import { Button, Loading } from '@/components';
import { ApiError } from '@/lib/api';
import { useSharedReport } from '@/features/shares';
import { sharedCsvUrl } from '@/features/reports';
import { ReportView } from '@/features/reports';
import { formatDateTime } from '@shared/format/datetime';

function Frame({ children }: { children: React.ReactNode }) {
  return (
    <div className="min-h-screen px-4 py-6 sm:px-8">
      <header className="no-print mx-auto mb-4 flex max-w-5xl items-center justify-between text-sm">
        <span className="text-lg font-bold tracking-tight text-accent-dark">Syntopy</span>
        <span className="text-ink-faint">shared report · read-only · research use only</span>
      </header>
      <main>{children}</main>
    </div>
  );
}

export function Component() {
  const token = useParams().token ?? '';
  const q = useSharedReport(token);
  useEffect(() => {
    // keep the personal token out of the referrer of anything the page loads
    const m = document.createElement('meta');
    m.name = 'referrer';
    m.content = 'no-referrer';
    document.head.appendChild(m);
    return () => m.remove();
  }, []);
  if (q.isPending)
    return (
      <Frame>
        <Loading label="Opening the report…" />
      </Frame>
    );
  if (q.isError) {
    const status = q.error instanceof ApiError ? q.error.status : 0;
    const heading = status === 410 ? 'This link no longer works' : status === 401 ? 'This link is not valid' : 'The report could not be opened';
    return (
      <Frame>
        <div role="alert" className="mx-auto max-w-lg rounded-lg border border-ink/10 bg-white p-6">
          <h1 className="text-xl">{heading}</h1>
          <p className="mt-2 text-sm text-ink-soft">{q.error.message}</p>
        </div>
      </Frame>
    );
  }
  const d = q.data;
  return (
    <Frame>
      <ReportView
        report={d.report}
        csvHref={(t) => sharedCsvUrl(token, t)}
        actions={<Button onClick={() => window.print()}>Print / PDF</Button>}
      />
      <p className="no-print mx-auto max-w-5xl text-xs text-ink-soft">
        Shared with {d.recipient}; this personal link works until {formatDateTime(d.expiresAt)}.
      </p>
    </Frame>
  );
}
