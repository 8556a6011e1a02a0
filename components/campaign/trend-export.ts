// Exports of the campaign trend (C8): the plotted points as CSV (RFC 4180: CRLF line ends, fields with a comma,
// quote or line break quoted, quotes doubled) and the figure as a standalone SVG or a PNG drawn from it.
import type { TrendPointDto } from './types';

const CSV_COLUMNS = [
  'scan_id',
  'scan_title',
  'result_id',
  'step_index',
  'step_quantity',
  'step_value',
  'offset_deg',
  'offset_err_deg',
  'radius_au',
  'radius_err_au',
  'intensity_from_radius_Wcm2',
  'intensity_from_radius_err_Wcm2',
  'transverse_shift_au',
  'flagged',
] as const;

function csvField(v: string | number | boolean | null): string {
  if (v === null) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Every plotted point, one row per step of a scan's latest result, full precision (no rounding for display). */
export function trendCsv(points: TrendPointDto[], xKey: 'step' | 'intensity'): string {
  const head = `# Lobeline campaign trend; x axis: ${xKey === 'intensity' ? 'intensity from the lobe radius' : 'scanned quantity'}; errors are one standard deviation (Poisson bootstrap)`;
  const rows = points.map((p) =>
    [
      p.scanId,
      p.scanTitle,
      p.resultId,
      p.stepIndex,
      p.stepQuantity,
      p.value,
      p.offsetDeg,
      p.offsetErrDeg,
      p.radiusAu,
      p.radiusErrAu,
      p.intensityWcm2,
      p.intensityErrWcm2,
      p.transverseShiftAu,
      p.flagged,
    ]
      .map(csvField)
      .join(','),
  );
  return `${[head, CSV_COLUMNS.join(','), ...rows].join('\r\n')}\r\n`;
}

const TEXT_STYLE_PROPS = ['fill', 'font-size', 'font-family', 'font-weight'] as const;

/**
 * The plot as a file of its own: the class-based styles of its text (from the page's style sheet) copied onto the
 * elements, a white background, explicit width and height, and the SVG namespace.
 */
export function svgToStandalone(svg: SVGSVGElement): string {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  const from = svg.querySelectorAll('text');
  const to = copy.querySelectorAll('text');
  from.forEach((el, i) => {
    const cs = getComputedStyle(el);
    const target = to[i];
    if (!target) return;
    for (const prop of TEXT_STYLE_PROPS) target.style.setProperty(prop, cs.getPropertyValue(prop));
    target.removeAttribute('class');
  });
  const vb = svg.viewBox.baseVal;
  copy.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  copy.setAttribute('width', String(vb.width));
  copy.setAttribute('height', String(vb.height));
  copy.removeAttribute('class');
  const bg = document.createElementNS('http://www.w3.org/2000/svg', 'rect');
  bg.setAttribute('width', '100%');
  bg.setAttribute('height', '100%');
  bg.setAttribute('fill', '#ffffff');
  copy.insertBefore(bg, copy.firstChild);
  return `<?xml version="1.0" encoding="UTF-8"?>\n${new XMLSerializer().serializeToString(copy)}`;
}

/** The standalone SVG drawn on a canvas at `scale`× its view box, as a PNG. */
export async function svgToPngBlob(svg: SVGSVGElement, scale = 2): Promise<Blob> {
  const vb = svg.viewBox.baseVal;
  const url = URL.createObjectURL(new Blob([svgToStandalone(svg)], { type: 'image/svg+xml' }));
  try {
    const img = new Image();
    img.decoding = 'sync';
    await new Promise<void>((resolve, reject) => {
      img.onload = () => resolve();
      img.onerror = () => reject(new Error('the figure could not be drawn'));
      img.src = url;
    });
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

export function downloadBlob(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = fileName;
  document.body.appendChild(a);
  a.click();
  a.remove();
  // give the browser the time to start the download before the URL goes
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}
