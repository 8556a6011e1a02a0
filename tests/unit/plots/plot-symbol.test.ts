// The markers Observable Plot draws (plotSymbol) have the outlines of the legend's markers (markerPath): the symbol is
// traced with d3-path (the path serializer of the d3 library that Plot itself uses for its symbols) and its vertices
// are compared with the vertices of markerPath's SVG path at the same half-size.
// d3-path ships no type declarations (and @types/d3-path is not installed): typed here by what the test uses
// @ts-expect-error no declaration file for 'd3-path'
import { path as untypedPath } from 'd3-path';
import { describe, expect, it } from 'vitest';
import { MARKER_SHAPES, markerPath, plotSymbol } from '@/components/plots/series-styles';

/** Vertices of an SVG path of absolute M, L, H, V and Z commands (what both writers emit for these shapes). */
function vertices(d: string): [number, number][] {
  const out: [number, number][] = [];
  let x = 0;
  let y = 0;
  for (const [, cmd, args] of d.matchAll(/([MLHVZ])([^MLHVZ]*)/g)) {
    const n = (args ?? '')
      .trim()
      .split(/[\s,]+/)
      .filter(Boolean)
      .map(Number);
    if (cmd === 'M' || cmd === 'L') [x, y] = [n[0] as number, n[1] as number];
    else if (cmd === 'H') x = n[0] as number;
    else if (cmd === 'V') y = n[0] as number;
    else continue;
    out.push([x, y]);
  }
  return out;
}

const path = untypedPath as () => CanvasPath & { toString(): string };

describe('plotSymbol', () => {
  it.each(MARKER_SHAPES.filter((s) => s !== 'circle'))('%s has the vertices of markerPath', (shape) => {
    const r = 3.4;
    const p = path();
    plotSymbol(shape).draw(p, Math.PI * r * r); // Plot passes the area π r² for a dot of radius r
    const ours = vertices(p.toString());
    const want = vertices(markerPath(shape, 0, 0, r));
    expect(ours.length).toBe(want.length);
    ours.forEach(([x, y], i) => {
      expect(x).toBeCloseTo((want[i] as [number, number])[0], 2);
      expect(y).toBeCloseTo((want[i] as [number, number])[1], 2);
    });
  });

  it('circle is a full circle of radius r', () => {
    const p = path();
    plotSymbol('circle').draw(p, Math.PI * 4 * 4);
    const d = p.toString();
    expect(d).toMatch(/^M4,0A4,4,0,1,1,-4,0A4,4,0,1,1,4,0Z$/);
  });
});
