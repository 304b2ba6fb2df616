/** Route module: People (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">People: not built yet.</div>;
}
