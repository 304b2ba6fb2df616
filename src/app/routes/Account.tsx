/** Route module: Account (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Account: not built yet.</div>;
}
