/** The `?next=` target after sign-in: only a path inside this site (no "//host" or "https://…"), else Home. */
export function safeNext(next: string | null | undefined): string {
  if (!next) return '/';
  if (!next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) return '/';
  if (next.startsWith('/signin')) return '/';
  return next;
}
