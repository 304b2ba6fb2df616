/** Route module: AcceptInvite (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">AcceptInvite: not built yet.</div>;
}
