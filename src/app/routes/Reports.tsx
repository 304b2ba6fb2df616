/** Route module: Reports (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Reports: not built yet.</div>;
}
