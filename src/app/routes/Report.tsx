/** Route module: Report (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Report: not built yet.</div>;
}
