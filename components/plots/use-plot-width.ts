'use client';

import { type RefObject, useEffect, useState } from 'react';

/**
 * The width in CSS px of the element behind `ref`, followed with a ResizeObserver, clamped to [min, max]. Plots
 * draw their SVG in this many user units, so text and markers keep their size on a phone instead of shrinking
 * with a fixed viewBox. Before the first measurement (and on the server) it is `max`.
 */
export function usePlotWidth(ref: RefObject<HTMLElement | null>, min: number, max: number): number {
  const [width, setWidth] = useState(max);
  useEffect(() => {
    const el = ref.current;
    if (!el || typeof ResizeObserver === 'undefined') return;
    const update = () => {
      const w = el.getBoundingClientRect().width;
      if (w > 0) setWidth(Math.round(Math.min(max, Math.max(min, w))));
    };
    update();
    const ro = new ResizeObserver(update);
    ro.observe(el);
    return () => ro.disconnect();
  }, [ref, min, max]);
  return width;
}
