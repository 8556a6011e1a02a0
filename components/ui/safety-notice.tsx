import { cx } from './cx';

/**
 * The reminder shown on every page about running a shift. Lobeline controls no hardware; the lab's own rules and
 * its licensed laser-safety officers govern the lasers, high voltage and vacuum.
 */
export function SafetyNotice({ compact = false, className }: { compact?: boolean; className?: string }) {
  return (
    <aside
      aria-label="Safety reminder"
      data-testid="safety-notice"
      className={cx('flex gap-3 rounded-md border border-flare-200 bg-flare-50 px-4 py-3 text-flare-900', className)}
    >
      <svg aria-hidden="true" viewBox="0 0 20 20" className="mt-0.5 size-5 shrink-0 text-flare-600">
        <path d="M10 2 1.5 17h17L10 2Z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
        <path d="M10 7.5v4.5M10 14.2v.3" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
      </svg>
      <div className="text-small">
        <p className="font-semibold">Safety comes before data.</p>
        {compact ? (
          <p className="mt-0.5">
            Class-4 lasers, detector high voltage and vacuum systems follow your lab&apos;s own safety rules and the
            instructions of its licensed laser-safety officer. Lobeline controls no hardware.
          </p>
        ) : (
          <>
            <p className="mt-0.5">
              Lobeline only records and reduces data; it controls no laser, power supply or pump. Class-4 laser beams
              (including invisible and scattered light), the high voltage on MCP and phosphor detectors, and vacuum
              systems are governed by your lab&apos;s own safety rules, interlocks and the licensed laser-safety
              officer.
            </p>
            <p className="mt-1">
              Wear the eyewear specified for the wavelengths in use, never defeat an interlock to finish a scan, and
              stop and ask when anything is unclear.
            </p>
          </>
        )}
      </div>
    </aside>
  );
}
