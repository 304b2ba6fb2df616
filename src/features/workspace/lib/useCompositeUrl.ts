/** A composite drawn by the pixel worker as an object URL for an <img> (revoked when replaced or unmounted); null while there is none. */
import { useEffect, useState } from 'react';
import type { CompositeView } from './useScatter';

export function useCompositeUrl(c: CompositeView | null): string | null {
  const [url, setUrl] = useState<string | null>(null);
  useEffect(() => {
    if (!c) {
      setUrl(null);
      return;
    }
    let made: string | null = null;
    let live = true;
    const canvas = document.createElement('canvas');
    canvas.width = c.width;
    canvas.height = c.height;
    const ctx = canvas.getContext('2d');
    if (!ctx) return;
    ctx.putImageData(new ImageData(new Uint8ClampedArray(c.rgba), c.width, c.height), 0, 0);
    canvas.toBlob((b) => {
      if (!b || !live) return;
      made = URL.createObjectURL(b);
      setUrl(made);
    });
    return () => {
      live = false;
      if (made) {
        const gone = made;
        setTimeout(() => URL.revokeObjectURL(gone), 1000);
      }
    };
  }, [c]);
  return url;
}
