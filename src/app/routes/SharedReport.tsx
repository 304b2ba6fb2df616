/** Route module: SharedReport (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">SharedReport: not built yet.</div>;
}
