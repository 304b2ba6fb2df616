/** Plain mail text with every http(s) address made a link (no HTML from the message is ever injected). */
import { Fragment } from 'react';

const URL_RE = /(https?:\/\/[^\s<>"')\]]+)/g;
/** trailing punctuation that ends a sentence rather than the address */
const TRAILING = /[.,;:!?]+$/;

export type TextPart = { kind: 'text'; text: string } | { kind: 'link'; href: string };

/** Splits text into plain runs and addresses (exported for tests). */
export function splitLinks(text: string): TextPart[] {
  const parts: TextPart[] = [];
  let last = 0;
  for (const m of text.matchAll(URL_RE)) {
    const start = m.index ?? 0;
    let href = m[0];
    const trail = href.match(TRAILING)?.[0] ?? '';
    if (trail) href = href.slice(0, -trail.length);
    if (start > last) parts.push({ kind: 'text', text: text.slice(last, start) });
    parts.push({ kind: 'link', href });
    last = start + href.length;
  }
  if (last < text.length) parts.push({ kind: 'text', text: text.slice(last) });
  return parts;
}

export function LinkifiedText({ text }: { text: string }) {
  return (
    <pre className="whitespace-pre-wrap break-words font-mono text-sm leading-relaxed text-ink [overflow-wrap:anywhere]">
      {splitLinks(text).map((p, i) =>
        p.kind === 'link' ? (
          <a key={i} href={p.href} className="rounded text-accent-dark underline focus-visible:outline-2 focus-visible:outline-accent">
            {p.href}
          </a>
        ) : (
          <Fragment key={i}>{p.text}</Fragment>
        ),
      )}
    </pre>
  );
}
