/** Which parts of Home a user sees, from their roles (a person with several roles sees each part once). */
import type { Role } from '@shared/schemas/auth';

export type HomeSection = 'manager' | 'microscopist' | 'biologist' | 'collaborator';

const ORDER: { section: HomeSection; role: Role }[] = [
  { section: 'manager', role: 'facility_manager' },
  { section: 'biologist', role: 'biologist' },
  { section: 'microscopist', role: 'microscopist' },
  { section: 'collaborator', role: 'collaborator' },
];

export function homeSections(roles: readonly Role[]): HomeSection[] {
  const out = ORDER.filter((o) => roles.includes(o.role)).map((o) => o.section);
  // a collaborator who also works in a lab sees shared work inside the other parts already
  if (out.length > 1) return out.filter((s) => s !== 'collaborator');
  return out;
}
