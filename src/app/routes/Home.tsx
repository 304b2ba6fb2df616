/** Route module: Home (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">Home: not built yet.</div>;
}
