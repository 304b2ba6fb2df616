/** Route module: Review queue — submitted recipe versions waiting for a facility manager. */
import { Card, PageHeader } from '@/components';
import { ReviewQueueList } from '@/features/recipes/components/ReviewQueueList';

export function Component() {
  return (
    <div>
      <PageHeader title="Review queue" description="Open a version to read its settings, compare it with the version before, and approve it or return it with a note." />
      <Card>
        <ReviewQueueList />
      </Card>
    </div>
  );
}
