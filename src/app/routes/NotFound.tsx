/** Route module: NotFound (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">NotFound: not built yet.</div>;
}
