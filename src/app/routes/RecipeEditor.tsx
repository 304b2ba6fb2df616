/** Route module: RecipeEditor (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">RecipeEditor: not built yet.</div>;
}
