// Saving the picture: a standalone SVG text, and a PNG rendered from it on a canvas.

/** The SVG element as a standalone SVG document (colours are attributes, so no stylesheet is needed). */
export function svgText(svg: SVGSVGElement): string {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  copy.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  copy.removeAttribute('class');
  copy.removeAttribute('style');
  copy.removeAttribute('data-frame');
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + new XMLSerializer().serializeToString(copy);
}

/** Renders SVG text to a PNG data URL at `scale` times its size. */
export function pngDataUrl(text: string, width: number, height: number, scale = 2): Promise<string> {
  return new Promise((resolve, reject) => {
    const image = new Image();
    image.onload = () => {
      const canvas = document.createElement('canvas');
      canvas.width = Math.round(width * scale);
      canvas.height = Math.round(height * scale);
      const ctx = canvas.getContext('2d');
      if (!ctx) return reject(new Error('no 2d canvas'));
      ctx.scale(scale, scale);
      ctx.drawImage(image, 0, 0, width, height);
      resolve(canvas.toDataURL('image/png'));
    };
    image.onerror = () => reject(new Error('the picture could not be rendered'));
    image.src = 'data:image/svg+xml;charset=utf-8,' + encodeURIComponent(text);
  });
}
