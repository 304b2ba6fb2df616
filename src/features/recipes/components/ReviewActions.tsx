/** Approve, return (with a note saying what to change) or retire a version: facility managers only. */
import { useState } from 'react';
import { Button, ErrorNotice, TextArea } from '@/components';
import type { RecipeDetail } from '@shared/schemas/recipes';
import { useRecipeTransition } from '../api/useRecipeTransition';

export function ReviewActions({ recipe }: { recipe: RecipeDetail }) {
  const [note, setNote] = useState('');
  const t = useRecipeTransition();
  const can = (a: RecipeDetail['allowed'][number]) => recipe.allowed.includes(a);
  if (!can('approve') && !can('return') && !can('retire')) return null;
  return (
    <div className="space-y-3">
      {(can('approve') || can('return')) && (
        <TextArea label="Note to the proposer" hint="Required when you return the recipe; kept in its history." value={note} onChange={(e) => setNote(e.target.value)} rows={3} />
      )}
      <div className="flex flex-wrap gap-2">
        {can('approve') && (
          <Button variant="primary" pending={t.isPending && t.variables?.action === 'approve'} onClick={() => t.mutate({ id: recipe.id, action: 'approve', note: note || undefined })}>
            Approve v{recipe.version}
          </Button>
        )}
        {can('return') && (
          <Button disabled={!note.trim()} pending={t.isPending && t.variables?.action === 'return'} onClick={() => t.mutate({ id: recipe.id, action: 'return', note })}>
            Return with note
          </Button>
        )}
        {can('retire') && (
          <Button variant="quietDanger" pending={t.isPending && t.variables?.action === 'retire'} onClick={() => t.mutate({ id: recipe.id, action: 'retire' })}>
            Retire
          </Button>
        )}
      </div>
      <ErrorNotice error={t.error} />
    </div>
  );
}
