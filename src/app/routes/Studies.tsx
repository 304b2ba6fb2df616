/** Route module: Studies (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Studies: not built yet.</div>;
}
