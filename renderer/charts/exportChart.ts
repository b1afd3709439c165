// Turning a drawn chart into files: the SVG as it is on screen (with the font and a white
// background written in, so it looks the same outside the app) and a PNG rendered from it.

const FONT = 'system-ui, -apple-system, "Segoe UI", Roboto, sans-serif';

export function svgText(svg: SVGSVGElement): string {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  const box = svg.getBoundingClientRect();
  const width = Number(svg.getAttribute('width')) || Math.round(box.width);
  const height = Number(svg.getAttribute('height')) || Math.round(box.height);
  copy.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  copy.setAttribute('width', String(width));
  copy.setAttribute('height', String(height));
  copy.setAttribute('font-family', FONT);
  const background = document.createElementNS('http://www.w3.org/2000/svg', 'rect');
  background.setAttribute('width', '100%');
  background.setAttribute('height', '100%');
  background.setAttribute('fill', '#ffffff');
  copy.insertBefore(background, copy.firstChild);
  return `<?xml version="1.0" encoding="UTF-8"?>\n${new XMLSerializer().serializeToString(copy)}`;
}

/** A PNG at `scale` times the on-screen size (2 = sharp on print and high-density screens). */
export async function svgToPng(svg: SVGSVGElement, scale = 2): Promise<Blob> {
  const text = svgText(svg);
  const width = Number(svg.getAttribute('width')) || svg.getBoundingClientRect().width;
  const height = Number(svg.getAttribute('height')) || svg.getBoundingClientRect().height;
  const url = URL.createObjectURL(new Blob([text], { type: 'image/svg+xml' }));
  try {
    const image = new Image();
    image.width = width;
    image.height = height;
    await new Promise<void>((resolve, reject) => {
      image.onload = () => resolve();
      image.onerror = () => reject(new Error('the chart could not be drawn as an image'));
      image.src = url;
    });
    const canvas = document.createElement('canvas');
    canvas.width = Math.round(width * scale);
    canvas.height = Math.round(height * scale);
    const g = canvas.getContext('2d');
    if (!g) throw new Error('no 2D canvas available');
    g.scale(scale, scale);
    g.drawImage(image, 0, 0, width, height);
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('PNG encoding failed'))), 'image/png'));
  } finally {
    URL.revokeObjectURL(url);
  }
}
