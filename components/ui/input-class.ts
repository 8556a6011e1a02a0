import { cx } from './cx';

/** Class names of text inputs, selects and text areas (also for controls rendered outside Field). */
export const inputClass = (hasError?: boolean) =>
  cx(
    'block w-full rounded-md bg-white px-3 py-2 text-body text-ink-900 ring-1 ring-inset placeholder:text-ink-400',
    'focus:outline-none focus:ring-2 disabled:bg-ink-50 disabled:text-ink-500',
    hasError ? 'ring-fault-500 focus:ring-fault-500' : 'ring-ink-200 focus:ring-lobe-500',
  );

/** Class names of small filter controls in a panel's header (their own width, never the full row). */
export const compactInputClass = (width = 'w-auto') =>
  cx(
    'h-8 max-w-full rounded-md bg-white px-2.5 py-0 text-small text-ink-900 ring-1 ring-ink-200 ring-inset',
    'placeholder:text-ink-400 focus:ring-2 focus:ring-lobe-500 focus:outline-none',
    width,
  );
