/** The study's other places: Runs, Cell table, Compare, Reports. */
import { NavLink } from 'react-router';
import { buttonClass } from '@/components/Button';

export function StudyLinks({ studyId }: { studyId: number }) {
  const links = [
    { to: `/runs?studyId=${studyId}`, label: 'Runs' },
    { to: `/studies/${studyId}/cell-table`, label: 'Cell table' },
    { to: `/studies/${studyId}/compare`, label: 'Compare' },
    { to: `/studies/${studyId}/reports`, label: 'Reports' },
  ];
  return (
    <nav aria-label="Study pages" className="flex flex-wrap gap-2">
      {links.map((l) => (
        <NavLink key={l.to} to={l.to} className={buttonClass('secondary', 'sm')}>
          {l.label}
        </NavLink>
      ))}
    </nav>
  );
}
