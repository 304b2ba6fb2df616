/** Route module: SignIn (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">SignIn: not built yet.</div>;
}
