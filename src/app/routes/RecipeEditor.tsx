/**
 * Route module: one recipe version (/recipes/:recipeId, or /recipes/new). Drafts and returned versions are
 * edited in place; approved versions are read-only and "Edit as a new version" starts the next draft.
 */
import { useEffect, useState } from 'react';
import { useNavigate, useParams } from 'react-router';
import { Button, Card, Caution, ErrorNotice, Loading, PageHeader, TextArea, TextField, inputClass, cx } from '@/components';
import { DEFAULT_RECIPE_SETTINGS, type RecipeDetail, type RecipeSettings } from '@shared/schemas/recipes';
import { useRecipe } from '@/features/recipes';
import { useCreateRecipe } from '@/features/recipes';
import { useUpdateRecipe } from '@/features/recipes';
import { useNewRecipeVersion } from '@/features/recipes';
import { useRecipeTransition } from '@/features/recipes';
import { SettingsEditor } from '@/features/recipes';
import { RecipeDiffView } from '@/features/recipes';
import { ReviewActions } from '@/features/recipes';
import { RecipeStatusBadge } from '@/features/recipes';
import { formatDateTime } from '@shared/format/datetime';

const trail = [{ to: '/recipes', label: 'Recipes' }];

function NewRecipe() {
  const nav = useNavigate();
  const create = useCreateRecipe();
  const [name, setName] = useState('');
  const [description, setDescription] = useState('');
  const [settings, setSettings] = useState<RecipeSettings>(DEFAULT_RECIPE_SETTINGS);
  return (
    <div>
      <PageHeader title="Propose a recipe" trail={trail} description="It starts as a draft. Submit it when it is ready; a facility manager approves it or returns it with a note." />
      <form
        className="space-y-4"
        onSubmit={(e) => {
          e.preventDefault();
          create.mutate({ name, description, settings }, { onSuccess: (r) => nav(`/recipes/${r.id}`) });
        }}
      >
        <Card className="space-y-3">
          <TextField label="Name" required value={name} onChange={(e) => setName(e.target.value)} error={create.error && 'fieldError' in create.error ? (create.error as { fieldError(p: string): string | undefined }).fieldError('name') : undefined} />
          <TextArea label="What it is for" rows={2} value={description} onChange={(e) => setDescription(e.target.value)} />
        </Card>
        <Card title="Settings">
          <SettingsEditor value={settings} onChange={setSettings} />
        </Card>
        <ErrorNotice error={create.error} />
        <Button type="submit" variant="primary" pending={create.isPending}>
          Save draft
        </Button>
      </form>
    </div>
  );
}

function Editor({ recipe }: { recipe: RecipeDetail }) {
  const nav = useNavigate();
  const editable = recipe.allowed.includes('edit');
  const [name, setName] = useState(recipe.name);
  const [description, setDescription] = useState(recipe.description);
  const [settings, setSettings] = useState<RecipeSettings>(recipe.settings);
  const [compareWith, setCompareWith] = useState<number | null>(recipe.versions.find((v) => v.id !== recipe.id)?.id ?? null);
  useEffect(() => {
    setName(recipe.name);
    setDescription(recipe.description);
    setSettings(recipe.settings);
  }, [recipe]);
  const update = useUpdateRecipe(recipe.id);
  const newVersion = useNewRecipeVersion(recipe.id);
  const transition = useRecipeTransition();
  const dirty = name !== recipe.name || description !== recipe.description || JSON.stringify(settings) !== JSON.stringify(recipe.settings);
  const frozen = recipe.status === 'approved' || recipe.status === 'retired';
  return (
    <div className="space-y-4">
      <PageHeader
        trail={trail}
        title={
          <span className="flex flex-wrap items-center gap-2">
            {recipe.name} <span className="font-mono text-base text-ink-soft">v{recipe.version}</span> <RecipeStatusBadge status={recipe.status} />
          </span>
        }
        description={`Proposed by ${recipe.proposer?.name ?? 'unknown'}${recipe.reviewer ? `; reviewed by ${recipe.reviewer.name}` : ''}.`}
        actions={
          <>
            {editable && (
              <Button variant="primary" disabled={!dirty} pending={update.isPending} onClick={() => update.mutate({ name, description, settings })}>
                Save
              </Button>
            )}
            {recipe.allowed.includes('submit') && (
              <Button disabled={dirty} pending={transition.isPending} onClick={() => transition.mutate({ id: recipe.id, action: 'submit' })} title={dirty ? 'Save your changes first' : undefined}>
                Submit for review
              </Button>
            )}
            {recipe.allowed.includes('new_version') && (
              <Button variant={dirty ? 'primary' : 'secondary'} pending={newVersion.isPending} onClick={() => newVersion.mutate({ name, description, settings }, { onSuccess: (r) => nav(`/recipes/${r.id}`) })}>
                {dirty ? 'Save as a new version' : 'Start a new version'}
              </Button>
            )}
          </>
        }
      />
      {recipe.status === 'returned' && recipe.reviewNote && (
        <Caution title={`Returned by ${recipe.reviewer?.name ?? 'a facility manager'}`}>{recipe.reviewNote}</Caution>
      )}
      {recipe.status !== 'approved' && recipe.status !== 'retired' && (
        <Caution tone="info">Runs made with this version are provisional until a facility manager approves it.</Caution>
      )}
      {frozen && <Caution tone="info">Approved versions never change. Edit the settings below and save them as a new version; it starts as a draft.</Caution>}
      <ErrorNotice error={update.error ?? newVersion.error ?? transition.error} />
      <Card className="space-y-3">
        <TextField label="Name" value={name} disabled={!editable && !frozen} onChange={(e) => setName(e.target.value)} />
        <TextArea label="What it is for" rows={2} value={description} disabled={!editable && !frozen} onChange={(e) => setDescription(e.target.value)} />
      </Card>
      <Card title="Settings">
        <SettingsEditor value={settings} onChange={setSettings} readOnly={!editable && !(frozen && recipe.allowed.includes('new_version'))} />
      </Card>
      {(recipe.allowed.includes('approve') || recipe.allowed.includes('retire')) && (
        <Card title="Review">
          <ReviewActions recipe={recipe} />
        </Card>
      )}
      {recipe.versions.length > 1 && (
        <Card
          title="Compare versions"
          actions={
            <label className="flex items-center gap-2 text-sm">
              <span className="text-ink-soft">v{recipe.version} against</span>
              <select className={cx(inputClass(false), 'w-auto')} value={compareWith ?? ''} onChange={(e) => setCompareWith(Number(e.target.value) || null)}>
                {recipe.versions
                  .filter((v) => v.id !== recipe.id)
                  .map((v) => (
                    <option key={v.id} value={v.id}>
                      v{v.version} ({v.status})
                    </option>
                  ))}
              </select>
            </label>
          }
        >
          {compareWith && <RecipeDiffView a={compareWith} b={recipe.id} />}
        </Card>
      )}
      <Card title="History">
        <ol className="space-y-1 text-sm">
          {recipe.history.map((h, i) => (
            <li key={i}>
              <span className="font-mono text-xs text-ink-soft">{formatDateTime(h.at)}</span> {h.actor?.name ?? 'someone'} — {h.action}
              {h.note && <span className="text-ink-soft">: “{h.note}”</span>}
            </li>
          ))}
        </ol>
      </Card>
    </div>
  );
}

export function Component() {
  const { recipeId } = useParams();
  const id = recipeId === 'new' ? null : Number(recipeId);
  const q = useRecipe(id);
  if (recipeId === 'new') return <NewRecipe />;
  if (q.isPending) return <Loading />;
  if (q.error) return <ErrorNotice error={q.error} />;
  return <Editor key={q.data.id} recipe={q.data} />;
}
