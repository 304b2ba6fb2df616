/** Route module: CellTable (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">CellTable: not built yet.</div>;
}
