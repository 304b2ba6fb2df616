/** Route module: NotFound: also shown for a study the user may not see (the server answers 404 for both). */
import { useLocation } from 'react-router';
import { ButtonLink } from '@/components/Button';
import { PageHeader } from '@/components/PageHeader';

export function Component() {
  const loc = useLocation();
  return (
    <>
      <PageHeader title="Nothing here" />
      <p className="max-w-prose text-ink-soft">
        There is no page at <code className="font-mono text-sm text-ink">{loc.pathname}</code>, or it is not visible to your account.
      </p>
      <div className="mt-6 flex gap-2">
        <ButtonLink to="/" variant="primary">
          Go home
        </ButtonLink>
        <ButtonLink to="/studies">See studies</ButtonLink>
      </div>
    </>
  );
}
