// The comparison figure's exports carry the app's shipped font (issue 13, item 4): the SVG gets an @font-face whose
// source is the woff2 of app/fonts as a data: URL, so the file looks the same on a machine without the font; the
// PNG is drawn from that SVG only once the font has been decoded (checked with document.fonts for the same bytes).
import { svgToStandalone } from '@/components/campaign/trend-export';

/** The family name the exported files use for the embedded font. */
export const EXPORT_FONT_FAMILY = 'Inter';

/** The address of the page's woff2 (next/font serves app/fonts under a hashed name; its @font-face rule says it). */
function fontUrlOfPage(): string | null {
  for (const sheet of Array.from(document.styleSheets)) {
    let rules: CSSRuleList;
    try {
      rules = sheet.cssRules;
    } catch {
      continue; // a style sheet of another origin cannot be read
    }
    for (const rule of Array.from(rules)) {
      if (!(rule instanceof CSSFontFaceRule)) continue;
      const m = /url\(["']?([^"')]+\.woff2)["']?\)/.exec(rule.style.getPropertyValue('src'));
      // the address is relative to the style sheet (e.g. ../media/…woff2), not to the page
      if (m?.[1]) return new URL(m[1], sheet.href ?? document.baseURI).href;
    }
  }
  return null;
}

function base64(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s);
}

let cached: Promise<Uint8Array> | null = null;

/** The bytes of the shipped woff2, fetched once from the page's own @font-face. */
export function shippedFontBytes(): Promise<Uint8Array> {
  if (!cached) {
    const url = fontUrlOfPage();
    cached = url
      ? fetch(url).then(async (r) => {
          if (!r.ok) throw new Error(`the font could not be read (${r.status})`);
          return new Uint8Array(await r.arrayBuffer());
        })
      : Promise.reject(new Error('the page has no woff2 font to embed'));
    cached.catch(() => {
      cached = null;
    });
  }
  return cached;
}

/** `standalone` (an SVG document as text) with the font embedded and every text set in it. */
export function embedFont(standalone: string, woff2: Uint8Array): string {
  const doc = new DOMParser().parseFromString(standalone, 'image/svg+xml');
  const root = doc.documentElement;
  const ns = 'http://www.w3.org/2000/svg';
  const style = doc.createElementNS(ns, 'style');
  style.textContent = `@font-face{font-family:"${EXPORT_FONT_FAMILY}";src:url(data:font/woff2;base64,${base64(woff2)}) format("woff2");font-weight:100 900;font-style:normal}`;
  const defs = doc.createElementNS(ns, 'defs');
  defs.appendChild(style);
  root.insertBefore(defs, root.firstChild);
  root.setAttribute('font-family', `${EXPORT_FONT_FAMILY}, sans-serif`);
  for (const el of Array.from(root.querySelectorAll('text, tspan'))) {
    (el as SVGElement).style.setProperty('font-family', `"${EXPORT_FONT_FAMILY}", sans-serif`);
  }
  return new XMLSerializer().serializeToString(doc).replace(/^(?!<\?xml)/, '<?xml version="1.0" encoding="UTF-8"?>\n');
}

/** The figure as a standalone SVG with the shipped font inside. */
export async function svgWithFont(svg: SVGSVGElement): Promise<string> {
  return embedFont(svgToStandalone(svg), await shippedFontBytes());
}

/**
 * The figure with its font as a PNG at `scale`× its view box. The font is first loaded into the page from the same
 * bytes (document.fonts), so that it is decoded before the image of the SVG is drawn; the image itself is decoded
 * (img.decode) before it is put on the canvas.
 */
export async function pngWithFont(svg: SVGSVGElement, scale: number): Promise<Blob> {
  const bytes = await shippedFontBytes();
  const face = new FontFace(EXPORT_FONT_FAMILY, bytes.slice().buffer as ArrayBuffer, { weight: '100 900' });
  await face.load();
  document.fonts.add(face);
  if (!document.fonts.check(`12px "${EXPORT_FONT_FAMILY}"`)) throw new Error('the font did not load');
  const vb = svg.viewBox.baseVal;
  const url = URL.createObjectURL(new Blob([embedFont(svgToStandalone(svg), bytes)], { type: 'image/svg+xml' }));
  try {
    const img = new Image();
    img.src = url;
    await img.decode();
    const canvas = document.createElement('canvas');
    canvas.width = Math.round(vb.width * scale);
    canvas.height = Math.round(vb.height * scale);
    const ctx = canvas.getContext('2d');
    if (!ctx) throw new Error('no 2D canvas');
    ctx.drawImage(img, 0, 0, canvas.width, canvas.height);
    return await new Promise<Blob>((resolve, reject) =>
      canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('no PNG'))), 'image/png'),
    );
  } finally {
    URL.revokeObjectURL(url);
  }
}
