'use client';
// A small picture of the centre finder's symmetry difference: (frame − frame transformed about the found centre)/σ
// per pixel, blue below and red above zero, saturating at ±3σ; grey where the tool compared nothing. Counting noise
// alone gives a fine speckle; structure (a ring half bright, a gradient across) means the centre or the symmetry
// does not fit.
import { useEffect, useRef } from 'react';

const SIDE = 160;
const LIMIT = 3;

export function SymmetryResidual({ image, nX, nY }: { image: Float32Array; nX: number; nY: number }) {
  const ref = useRef<HTMLCanvasElement>(null);
  const scale = SIDE / Math.max(nX, nY);
  const w = Math.round(nX * scale);
  const h = Math.round(nY * scale);
  useEffect(() => {
    const c = ref.current;
    if (!c) return;
    const off = document.createElement('canvas');
    off.width = nX;
    off.height = nY;
    const octx = off.getContext('2d');
    const ctx = c.getContext('2d');
    if (!octx || !ctx) return;
    const img = octx.createImageData(nX, nY);
    for (let iy = 0; iy < nY; iy++) {
      const row = nY - 1 - iy; // y grows upward, as on the raw frame
      for (let ix = 0; ix < nX; ix++) {
        const v = image[iy * nX + ix]!;
        const o = (row * nX + ix) * 4;
        if (!Number.isFinite(v)) {
          img.data[o] = 226;
          img.data[o + 1] = 229;
          img.data[o + 2] = 234;
        } else {
          const t = Math.max(-1, Math.min(1, v / LIMIT));
          // white at 0, toward (37, 99, 235) below and (220, 38, 38) above
          const [r, g, b] = t < 0 ? [37, 99, 235] : [220, 38, 38];
          const a = Math.abs(t);
          img.data[o] = Math.round(255 + (r - 255) * a);
          img.data[o + 1] = Math.round(255 + (g - 255) * a);
          img.data[o + 2] = Math.round(255 + (b - 255) * a);
        }
        img.data[o + 3] = 255;
      }
    }
    octx.putImageData(img, 0, 0);
    c.width = w;
    c.height = h;
    ctx.imageSmoothingEnabled = false;
    ctx.drawImage(off, 0, 0, w, h);
  }, [image, nX, nY, w, h]);
  return (
    <figure className="flex items-start gap-3">
      <canvas
        ref={ref}
        style={{ width: w, height: h }}
        className="rounded-md ring-1 ring-ink-100"
        aria-label="Symmetry difference about the found centre, in standard errors"
        data-testid="tool-centre-residual"
      />
      <figcaption className="max-w-[14rem] text-micro text-ink-500">
        Frame minus its symmetric image about the found centre, in standard errors (blue −{LIMIT}σ, white 0, red +
        {LIMIT}σ; grey: not compared). Noise alone looks like even speckle; a pattern means the centre or the symmetry
        is off.
      </figcaption>
    </figure>
  );
}
