/** Route module: Outbox (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Outbox: not built yet.</div>;
}
