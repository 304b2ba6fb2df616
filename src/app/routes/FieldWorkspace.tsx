/** Route module: FieldWorkspace (placeholder until its feature lands). */
export function Component() {
  return <div className="text-ink-soft">FieldWorkspace: not built yet.</div>;
}
