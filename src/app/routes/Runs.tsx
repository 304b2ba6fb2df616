/** Route module: Runs (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Runs: not built yet.</div>;
}
