/** Route module: Study (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Study: not built yet.</div>;
}
