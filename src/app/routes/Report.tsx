/** Route module: one report, with printing, CSV downloads and (for those who may) sharing by e-mail. */
import { useState } from 'react';
import { Link, useParams } from 'react-router';
import { Button, Card, ErrorNotice, Loading } from '@/components';
import { useReport } from '@/features/reports';
import { reportCsvUrl } from '@/features/reports';
import { ReportView } from '@/features/reports';
import { ShareDialog } from '@/features/shares';
import { ShareLinksTable } from '@/features/shares';
import { ApiError } from '@/lib/api';
import { Component as NotFound } from './NotFound';

export function Component() {
  const id = Number(useParams().reportId);
  const q = useReport(id);
  const [sharing, setSharing] = useState(false);
  if (!Number.isInteger(id) || id <= 0) return <NotFound />;
  if (q.isPending) return <Loading label="Loading report…" />;
  if (q.isError) return q.error instanceof ApiError && q.error.status === 404 ? <NotFound /> : <ErrorNotice error={q.error} />;
  const r = q.data;
  return (
    <div>
      <nav className="no-print mb-3 text-sm text-ink-soft">
        <Link to={`/studies/${r.studyId}/reports`} className="hover:underline">
          ← Reports of “{r.snapshot.study.name}”
        </Link>
      </nav>
      <ReportView
        report={r}
        csvHref={(t) => reportCsvUrl(r.id, t)}
        actions={
          <>
            <Button onClick={() => window.print()}>Print / PDF</Button>
            {r.canShare && (
              <Button variant="primary" onClick={() => setSharing(true)}>
                Share by e-mail
              </Button>
            )}
          </>
        }
      />
      {r.canShare && (
        <Card title="Share links" className="no-print mx-auto mt-2 max-w-5xl">
          <ShareLinksTable reportId={r.id} />
        </Card>
      )}
      {sharing && <ShareDialog reportId={r.id} open onClose={() => setSharing(false)} />}
    </div>
  );
}
