/** Route module: Recipes — every recipe version, filtered by status, and a way to propose a new one. */
import { ButtonLink, PageHeader } from '@/components';
import { useMe } from '@/features/auth';
import { RecipeList } from '@/features/recipes';

export function Component() {
  const me = useMe();
  const canPropose = !!me.data?.roles.some((r) => r !== 'collaborator');
  return (
    <div>
      <PageHeader
        title="Recipes"
        description="A recipe is a named, versioned set of quantification settings. Numbers are comparable when they come from the same approved version."
        actions={canPropose && <ButtonLink variant="primary" to="/recipes/new">Propose a recipe</ButtonLink>}
      />
      <RecipeList />
    </div>
  );
}
