/** Route module: ReviewQueue (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">ReviewQueue: not built yet.</div>;
}
