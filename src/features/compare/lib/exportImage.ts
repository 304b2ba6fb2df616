/** Download an on-screen SVG chart as an SVG file, or as a PNG drawn through a canvas from that SVG. */

function serialize(svg: SVGSVGElement): string {
  const clone = svg.cloneNode(true) as SVGSVGElement;
  clone.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  clone.setAttribute('xmlns:xlink', 'http://www.w3.org/1999/xlink');
  const { width, height } = svg.viewBox.baseVal;
  if (width && height) {
    clone.setAttribute('width', String(width));
    clone.setAttribute('height', String(height));
  }
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + new XMLSerializer().serializeToString(clone);
}

function save(blob: Blob, name: string) {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

export function downloadSvg(svg: SVGSVGElement, name: string) {
  save(new Blob([serialize(svg)], { type: 'image/svg+xml' }), name.endsWith('.svg') ? name : `${name}.svg`);
}

/** Renders the SVG into a canvas at `scale` × its size on a white background and saves a PNG. */
export async function svgToPngBlob(svg: SVGSVGElement, scale = 2): Promise<Blob> {
  const { width, height } = svg.viewBox.baseVal;
  const w = Math.round((width || svg.clientWidth) * scale);
  const h = Math.round((height || svg.clientHeight) * scale);
  const url = URL.createObjectURL(new Blob([serialize(svg)], { type: 'image/svg+xml' }));
  try {
    const img = new Image();
    await new Promise<void>((resolve, reject) => {
      img.onload = () => resolve();
      img.onerror = () => reject(new Error('the chart could not be drawn as an image'));
      img.src = url;
    });
    const canvas = document.createElement('canvas');
    canvas.width = w;
    canvas.height = h;
    const g = canvas.getContext('2d');
    if (!g) throw new Error('this browser gives no canvas to draw the PNG on');
    g.fillStyle = '#ffffff';
    g.fillRect(0, 0, w, h);
    g.drawImage(img, 0, 0, w, h);
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('PNG encoding failed'))), 'image/png'));
  } finally {
    URL.revokeObjectURL(url);
  }
}

export async function downloadPng(svg: SVGSVGElement, name: string, scale = 2) {
  save(await svgToPngBlob(svg, scale), name.endsWith('.png') ? name : `${name}.png`);
}
