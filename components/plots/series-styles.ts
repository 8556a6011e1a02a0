// Colour and marker shape of the n-th series of a plot with many series (the campaign trend's scans).
//
// Colours: the colour-blind-safe qualitative set of Okabe and Ito, "Color Universal Design (CUD): how to make figures
// and presentations that are friendly to colorblind people" (2008), without its yellow (#F0E442), which is too pale
// on a white plot. Shapes: five marker outlines that differ at 7 px. Series n gets colour n mod 7 and shape n mod 5;
// 7 and 5 have no common factor, so the first 35 series all get different pairs (Chinese remainder theorem), and
// two neighbours in the legend never share either the colour or the shape.

export const OKABE_ITO = [
  { name: 'black', hex: '#000000' },
  { name: 'orange', hex: '#E69F00' },
  { name: 'sky blue', hex: '#56B4E9' },
  { name: 'bluish green', hex: '#009E73' },
  { name: 'blue', hex: '#0072B2' },
  { name: 'vermillion', hex: '#D55E00' },
  { name: 'reddish purple', hex: '#CC79A7' },
] as const;

export const MARKER_SHAPES = ['diamond', 'circle', 'square', 'triangle-up', 'triangle-down'] as const;
export type MarkerShape = (typeof MARKER_SHAPES)[number];

/** How many series get distinct (colour, shape) pairs. */
export const DISTINCT_SERIES_STYLES = OKABE_ITO.length * MARKER_SHAPES.length;

export interface SeriesStyle {
  color: string;
  colorName: string;
  shape: MarkerShape;
}

export function seriesStyle(index: number): SeriesStyle {
  const i = Math.max(0, Math.floor(index));
  const c = OKABE_ITO[i % OKABE_ITO.length] as (typeof OKABE_ITO)[number];
  return { color: c.hex, colorName: c.name, shape: MARKER_SHAPES[i % MARKER_SHAPES.length] as MarkerShape };
}

/** SVG path of a marker of `shape` centred on (x, y) with half-size `r` px. */
export function markerPath(shape: MarkerShape, x: number, y: number, r: number): string {
  const f = (v: number) => v.toFixed(2);
  switch (shape) {
    case 'diamond':
      return `M${f(x)} ${f(y - r * 1.25)}L${f(x + r * 1.25)} ${f(y)}L${f(x)} ${f(y + r * 1.25)}L${f(x - r * 1.25)} ${f(y)}Z`;
    case 'square':
      return `M${f(x - r)} ${f(y - r)}H${f(x + r)}V${f(y + r)}H${f(x - r)}Z`;
    case 'triangle-up':
      return `M${f(x)} ${f(y - r * 1.3)}L${f(x + r * 1.2)} ${f(y + r * 0.9)}H${f(x - r * 1.2)}Z`;
    case 'triangle-down':
      return `M${f(x)} ${f(y + r * 1.3)}L${f(x + r * 1.2)} ${f(y - r * 0.9)}H${f(x - r * 1.2)}Z`;
    default:
      // a circle as two arcs
      return `M${f(x - r)} ${f(y)}A${f(r)} ${f(r)} 0 1 0 ${f(x + r)} ${f(y)}A${f(r)} ${f(r)} 0 1 0 ${f(x - r)} ${f(y)}Z`;
  }
}

/**
 * The marker outline of `shape` as a symbol object for Observable Plot's `symbol` option (the d3-shape symbol
 * interface: `draw(context, size)` with `size` the area in px², so that r = √(size/π) is the half-size of
 * markerPath). Same outlines as markerPath, so the plots and their legends agree.
 */
export function plotSymbol(shape: MarkerShape): {
  draw(
    ctx: {
      moveTo(x: number, y: number): void;
      lineTo(x: number, y: number): void;
      closePath(): void;
      arc(x: number, y: number, r: number, a0: number, a1: number): void;
    },
    size: number,
  ): void;
} {
  return {
    draw(ctx, size) {
      const r = Math.sqrt(size / Math.PI);
      switch (shape) {
        case 'diamond':
          ctx.moveTo(0, -r * 1.25);
          ctx.lineTo(r * 1.25, 0);
          ctx.lineTo(0, r * 1.25);
          ctx.lineTo(-r * 1.25, 0);
          break;
        case 'square':
          ctx.moveTo(-r, -r);
          ctx.lineTo(r, -r);
          ctx.lineTo(r, r);
          ctx.lineTo(-r, r);
          break;
        case 'triangle-up':
          ctx.moveTo(0, -r * 1.3);
          ctx.lineTo(r * 1.2, r * 0.9);
          ctx.lineTo(-r * 1.2, r * 0.9);
          break;
        case 'triangle-down':
          ctx.moveTo(0, r * 1.3);
          ctx.lineTo(r * 1.2, -r * 0.9);
          ctx.lineTo(-r * 1.2, -r * 0.9);
          break;
        default:
          ctx.moveTo(r, 0);
          ctx.arc(0, 0, r, 0, 2 * Math.PI);
      }
      ctx.closePath();
    },
  };
}
