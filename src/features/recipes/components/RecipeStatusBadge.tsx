/** A recipe version's status as a word, and the provisional marker used wherever draft-made numbers appear. */
import { Badge, type BadgeTone } from '@/components/Badge';
import type { RecipeStatus } from '@shared/schemas/recipes';

const LOOK: Record<RecipeStatus, { label: string; tone: BadgeTone }> = {
  draft: { label: 'Draft', tone: 'neutral' },
  submitted: { label: 'Awaiting review', tone: 'accent' },
  approved: { label: 'Approved', tone: 'accent' },
  returned: { label: 'Returned', tone: 'warn' },
  retired: { label: 'Retired', tone: 'neutral' },
};

export function RecipeStatusBadge({ status }: { status: RecipeStatus }) {
  const l = LOOK[status];
  return <Badge tone={l.tone}>{l.label}</Badge>;
}

export const RECIPE_STATUS_LABEL = (s: RecipeStatus) => LOOK[s].label;

/** Shown beside any number computed with a recipe version that was not approved. */
export function ProvisionalBadge() {
  return (
    <Badge tone="warn" className="uppercase tracking-wide">
      <span title="Made with a recipe version that is not approved: these numbers may change.">Provisional</span>
    </Badge>
  );
}
