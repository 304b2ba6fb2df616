/** How roles read on screen, and a small badge for them. */
import type { Role } from '@shared/schemas/auth';
import { Badge } from '@/components/Badge';

export const ROLE_LABELS: Record<Role, string> = {
  microscopist: 'Microscopist',
  facility_manager: 'Facility manager',
  biologist: 'Biologist',
  collaborator: 'Collaborator',
};

export const ROLE_DUTIES: Record<Role, string> = {
  microscopist: 'uploads fields, outlines cells, runs analyses, proposes recipes',
  facility_manager: 'reviews recipes, manages accounts and labs, sees every study',
  biologist: 'owns studies, conditions and coverslips, compares and reports',
  collaborator: 'reads what was shared with them',
};

export function RoleBadges({ roles }: { roles: Role[] }) {
  return (
    <span className="inline-flex flex-wrap gap-1">
      {roles.map((r) => (
        <Badge key={r} tone={r === 'facility_manager' ? 'accent' : 'neutral'}>
          {ROLE_LABELS[r]}
        </Badge>
      ))}
    </span>
  );
}
