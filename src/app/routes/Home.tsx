/** Route module: Home: what needs the user's attention, by role. */
import { useMe } from '@/features/auth';
import { useStudies } from '@/features/studies';
import { homeSections } from '@/features/home';
import { ManagerPanel } from '@/features/home';
import { MicroscopistPanel } from '@/features/home';
import { BiologistPanel } from '@/features/home';
import { CollaboratorPanel } from '@/features/home';
import { Caution, ErrorNotice } from '@/components/Caution';
import { PageHeader } from '@/components/PageHeader';
import { Loading } from '@/components/Spinner';

export function Component() {
  const me = useMe();
  const studies = useStudies();
  if (!me.data) return <Loading />;
  const user = me.data;
  const sections = homeSections(user.roles);

  return (
    <>
      <PageHeader title={`Hello, ${user.name}`} description="What needs your attention today." />
      {studies.isError && <ErrorNotice error={studies.error} className="mb-4" />}
      <div className="flex flex-col gap-10">
        {sections.map((s) =>
          s === 'manager' ? (
            <ManagerPanel key={s} />
          ) : studies.isPending ? (
            <Loading key={s} />
          ) : s === 'microscopist' ? (
            <MicroscopistPanel key={s} studies={studies.data ?? []} />
          ) : s === 'biologist' ? (
            <BiologistPanel key={s} studies={studies.data ?? []} meId={user.id} />
          ) : (
            <CollaboratorPanel key={s} studies={studies.data ?? []} />
          ),
        )}
      </div>
      <Caution className="mt-10" title="Before reading any coefficient">
        Co-localization at light-microscope resolution (about 200 nm laterally) is not molecular interaction. Saturated pixels, channel bleed-through,
        chromatic shift and unequal image adjustment all bias the result. Research use only; not for diagnosis.
      </Caution>
    </>
  );
}
