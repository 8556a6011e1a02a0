import { cx } from './cx';

/** Class names of text inputs, selects and text areas (also for controls rendered outside Field). */
export const inputClass = (hasError?: boolean) =>
  cx(
    'block w-full rounded-md bg-white px-3 py-2 text-body text-ink-900 ring-1 ring-inset placeholder:text-ink-400',
    'focus:outline-none focus:ring-2 disabled:bg-ink-50 disabled:text-ink-500',
    hasError ? 'ring-fault-500 focus:ring-fault-500' : 'ring-ink-200 focus:ring-lobe-500',
  );
