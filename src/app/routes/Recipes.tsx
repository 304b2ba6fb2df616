/** Route module: Recipes (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Recipes: not built yet.</div>;
}
