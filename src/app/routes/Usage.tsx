/** Route module: Facility usage (facility managers): per lab and month, with a CSV export of the same rows. */
import { useSearchParams } from 'react-router';
import { useMe } from '@/features/auth';
import { useUsage, UsageTable } from '@/features/usage';
import { ErrorNotice } from '@/components/Caution';
import { PageHeader } from '@/components/PageHeader';
import { Loading } from '@/components/Spinner';
import { inputClass } from '@/components';
import { Component as NotFound } from './NotFound';

export function Component() {
  const me = useMe();
  const allowed = !!me.data?.roles.includes('facility_manager');
  const [params, setParams] = useSearchParams();
  const range = { from: params.get('from') ?? undefined, to: params.get('to') ?? undefined };
  const usage = useUsage(range, allowed);
  if (!me.data) return <Loading />;
  if (!allowed) return <NotFound />;
  const set = (k: 'from' | 'to', v: string) => {
    const next = new URLSearchParams(params);
    if (v) next.set(k, v);
    else next.delete(k);
    setParams(next, { replace: true });
  };
  const shown = usage.data;
  return (
    <>
      <PageHeader
        title="Facility usage"
        description="Per lab and month (UTC): studies created, fields uploaded and their bytes, runs started and their time, and the people active in the lab's studies."
        actions={
          shown && (
            <a className="rounded-md border border-ink/20 bg-white px-2.5 py-1 text-sm font-medium hover:bg-ink/5" href={`/api/usage.csv?from=${shown.from}&to=${shown.to}`} download>
              Download CSV
            </a>
          )
        }
      />
      <div className="mb-4 flex flex-wrap gap-4">
        <label className="flex flex-col gap-1 text-sm font-medium">
          From
          <input type="month" className={inputClass()} value={shown?.from ?? range.from ?? ''} onChange={(e) => set('from', e.target.value)} />
        </label>
        <label className="flex flex-col gap-1 text-sm font-medium">
          To
          <input type="month" className={inputClass()} value={shown?.to ?? range.to ?? ''} onChange={(e) => set('to', e.target.value)} />
        </label>
      </div>
      {usage.isPending ? <Loading /> : usage.isError ? <ErrorNotice error={usage.error} /> : <UsageTable rows={usage.data.rows} />}
    </>
  );
}
