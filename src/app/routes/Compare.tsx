/** Route module: Compare (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Compare: not built yet.</div>;
}
