/** A calm placeholder while data loads (announced to screen readers once). */
export function LoadingBlock({ label = 'Loading…', lines = 3 }: { label?: string; lines?: number }) {
  return (
    <div role="status" aria-live="polite" className="space-y-2.5 py-2" data-testid="loading-block">
      <span className="sr-only">{label}</span>
      {Array.from({ length: lines }, (_, i) => (
        <div
          // biome-ignore lint/suspicious/noArrayIndexKey: static placeholder rows with no identity
          key={i}
          aria-hidden="true"
          className="h-3.5 animate-pulse rounded bg-ink-100"
          style={{ width: `${92 - ((i * 17) % 40)}%` }}
        />
      ))}
    </div>
  );
}
