/** Route module: Review queue — submitted recipe versions waiting for a facility manager.
 *  Facility managers review from here; anyone else who opens it sees the same list read-only. */
import { Card, Loading, PageHeader } from '@/components';
import { useMe } from '@/features/auth';
import { ReviewQueueList } from '@/features/recipes';

export function Component() {
  const me = useMe();
  if (me.isPending) return <Loading />;
  const manager = !!me.data?.roles.includes('facility_manager');
  return (
    <div>
      <PageHeader
        title="Review queue"
        description={
          manager
            ? 'Open a version to read its settings, compare it with the version before, and approve it or return it with a note.'
            : 'Submitted recipes wait here for a facility manager to approve them or return them with a note. Until then, runs made with them are provisional.'
        }
      />
      <Card>
        <ReviewQueueList reviewer={manager} />
      </Card>
    </div>
  );
}
