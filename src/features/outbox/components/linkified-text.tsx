import type { ReactNode } from 'react';

const URL_PATTERN = /(https?:\/\/[^\s<>"')\]]+)/g;

/** Plain e-mail text with its web addresses made into links (only http and https). */
export function LinkifiedText({ text }: { text: string }) {
  const parts: ReactNode[] = [];
  let last = 0;
  for (const match of text.matchAll(URL_PATTERN)) {
    const start = match.index ?? 0;
    if (start > last) parts.push(text.slice(last, start));
    // A sentence's full stop or comma is not part of the address.
    const url = match[0].replace(/[.,;:!?]+$/, '');
    parts.push(
      <a key={start} href={url} className="break-all underline underline-offset-2" target="_blank" rel="noreferrer">
        {url}
      </a>,
    );
    last = start + url.length;
  }
  if (last < text.length) parts.push(text.slice(last));
  return <>{parts}</>;
}
