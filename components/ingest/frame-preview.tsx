'use client';

import { useEffect, useRef } from 'react';
import { formatNumber } from '@/lib/format';
import type { PrecheckPreview } from './precheck-protocol';

/**
 * The first frame of a dropped file, drawn small on a canvas with y upward (FORMATS §1) on a square-root scale so
 * that weak lobes stay visible. Colours run from ink (no counts) through lobe teal to flare amber (most counts).
 */
export function FramePreview({ preview, size = 96 }: { preview: PrecheckPreview; size?: number }) {
  const ref = useRef<HTMLCanvasElement>(null);
  useEffect(() => {
    const canvas = ref.current;
    const ctx = canvas?.getContext('2d');
    if (!canvas || !ctx) return;
    const { width, height, pixels, max } = preview;
    canvas.width = width;
    canvas.height = height;
    const img = ctx.createImageData(width, height);
    const top = Math.sqrt(max) || 1;
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const t = Math.sqrt(pixels[y * width + x]!) / top;
        const o = ((height - 1 - y) * width + x) * 4;
        // ink-950 (2, 6, 23) → lobe-500 (20, 184, 166) → flare-300 (252, 211, 77)
        const [r, g, b] =
          t < 0.6
            ? [2 + (20 - 2) * (t / 0.6), 6 + (184 - 6) * (t / 0.6), 23 + (166 - 23) * (t / 0.6)]
            : [
                20 + (252 - 20) * ((t - 0.6) / 0.4),
                184 + (211 - 184) * ((t - 0.6) / 0.4),
                166 + (77 - 166) * ((t - 0.6) / 0.4),
              ];
        img.data[o] = r;
        img.data[o + 1] = g;
        img.data[o + 2] = b;
        img.data[o + 3] = 255;
      }
    }
    ctx.putImageData(img, 0, 0);
  }, [preview]);
  return (
    <canvas
      ref={ref}
      role="img"
      aria-label={`First frame preview, ${formatNumber(preview.totalCounts, 3)} counts in total`}
      className="shrink-0 rounded-md ring-1 ring-ink-200 [image-rendering:pixelated]"
      style={{ width: size, height: size * (preview.height / preview.width) }}
      data-testid="frame-preview"
    />
  );
}
