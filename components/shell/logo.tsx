/** Lobeline's mark: two offset momentum lobes around the zero-momentum point. */
export function LogoMark({ className = 'size-7' }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true" focusable="false">
      <rect width="32" height="32" rx="8" className="fill-ink-900" />
      <g transform="rotate(-28 16 16)">
        <ellipse cx="10.4" cy="16" rx="6.6" ry="4.1" className="fill-lobe-400" />
        <ellipse cx="21.6" cy="16" rx="6.6" ry="4.1" className="fill-lobe-200" opacity="0.92" />
      </g>
      <circle cx="16" cy="16" r="1.6" className="fill-flare-300" />
    </svg>
  );
}

export function Wordmark() {
  return (
    <span className="flex items-center gap-2.5">
      <LogoMark />
      <span className="text-lead font-semibold tracking-tight text-ink-900">Lobeline</span>
    </span>
  );
}
