'use client';
// A small picture of the centre finder's symmetry difference: (frame − frame transformed about the found centre)/σ
// per pixel, blue below and red above zero, saturating at ±3σ; grey where the tool compared nothing. Counting noise
// alone gives a fine speckle; structure (a ring half bright, a gradient across) means the centre or the symmetry
// does not fit.
import { useEffect, useMemo, useRef } from 'react';

const SIDE = 160;
const LIMIT = 3;

/** The box (pixels, inclusive) around every pixel whose difference is not exactly 0, with a margin. */
function busyBox(image: Float32Array, nX: number, nY: number) {
  let x0 = nX;
  let y0 = nY;
  let x1 = -1;
  let y1 = -1;
  for (let iy = 0; iy < nY; iy++) {
    for (let ix = 0; ix < nX; ix++) {
      const v = image[iy * nX + ix]!;
      if (!Number.isFinite(v) || v === 0) continue;
      if (ix < x0) x0 = ix;
      if (ix > x1) x1 = ix;
      if (iy < y0) y0 = iy;
      if (iy > y1) y1 = iy;
    }
  }
  if (x1 < 0) return { x0: 0, y0: 0, nx: nX, ny: nY };
  const m = 4;
  x0 = Math.max(0, x0 - m);
  y0 = Math.max(0, y0 - m);
  x1 = Math.min(nX - 1, x1 + m);
  y1 = Math.min(nY - 1, y1 + m);
  return { x0, y0, nx: x1 - x0 + 1, ny: y1 - y0 + 1 };
}

export function SymmetryResidual({ image, nX, nY }: { image: Float32Array; nX: number; nY: number }) {
  const ref = useRef<HTMLCanvasElement>(null);
  // shown: the part of the frame where the difference is not 0 (pixels without counts on both sides are 0)
  const box = useMemo(() => busyBox(image, nX, nY), [image, nX, nY]);
  const scale = SIDE / Math.max(box.nx, box.ny);
  const w = Math.round(box.nx * scale);
  const h = Math.round(box.ny * scale);
  useEffect(() => {
    const c = ref.current;
    if (!c) return;
    const { x0, y0, nx, ny } = box;
    const off = document.createElement('canvas');
    off.width = nx;
    off.height = ny;
    const octx = off.getContext('2d');
    const ctx = c.getContext('2d');
    if (!octx || !ctx) return;
    const img = octx.createImageData(nx, ny);
    for (let iy = 0; iy < ny; iy++) {
      const row = ny - 1 - iy; // y grows upward, as on the raw frame
      for (let ix = 0; ix < nx; ix++) {
        const v = image[(iy + y0) * nX + ix + x0]!;
        const o = (row * nx + ix) * 4;
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
  }, [image, nX, box, w, h]);
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
        Frame minus its symmetric image about the found centre (the part with counts), in standard errors (blue −{LIMIT}
        σ, white 0, red +{LIMIT}σ; grey: not compared). Noise alone looks like even speckle; a pattern means the centre
        or the symmetry is off.
      </figcaption>
    </figure>
  );
}
