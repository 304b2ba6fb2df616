/** Route module: Studies: every study the user may see; biologists start new ones here. */
import { useState } from 'react';
import { useNavigate } from 'react-router';
import { useMe } from '@/features/auth';
import { useStudies } from '@/features/studies';
import { useLabs } from '@/features/people';
import { StudyList } from '@/features/studies';
import { CreateStudyForm } from '@/features/studies';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { EmptyState } from '@/components/EmptyState';
import { ErrorNotice } from '@/components/Caution';
import { Loading } from '@/components/Spinner';
import { PageHeader } from '@/components/PageHeader';

export function Component() {
  const me = useMe();
  const canCreate = !!me.data?.roles.includes('biologist');
  const studies = useStudies();
  const labs = useLabs(canCreate);
  const [creating, setCreating] = useState(false);
  const navigate = useNavigate();
  const myLabs = (labs.data ?? []).filter((l) => l.members.some((m) => m.id === me.data?.id));

  return (
    <>
      <PageHeader
        title="Studies"
        description="A study holds conditions; each condition holds coverslips (the biological replicates); each coverslip holds fields."
        actions={
          canCreate && (
            <Button variant="primary" onClick={() => setCreating(true)} disabled={labs.isPending}>
              New study
            </Button>
          )
        }
      />
      {studies.isPending ? (
        <Loading />
      ) : studies.isError ? (
        <ErrorNotice error={studies.error} />
      ) : studies.data.length === 0 ? (
        <EmptyState
          title="No studies yet"
          action={
            canCreate && (
              <Button variant="primary" onClick={() => setCreating(true)}>
                Start a study
              </Button>
            )
          }
        >
          {canCreate ? 'Start one to add conditions and coverslips.' : 'Studies of your lab, and studies shared with you, appear here.'}
        </EmptyState>
      ) : (
        <StudyList studies={studies.data} />
      )}
      <Dialog open={creating} onClose={() => setCreating(false)} title="New study">
        {labs.isError ? (
          <ErrorNotice error={labs.error} />
        ) : myLabs.length === 0 && !labs.isPending ? (
          <ErrorNotice error="You are not a member of any lab yet. Ask your facility manager to add you to one." />
        ) : (
          <CreateStudyForm labs={myLabs} onCancel={() => setCreating(false)} onCreated={(s) => navigate(`/studies/${s.id}`)} />
        )}
      </Dialog>
    </>
  );
}
