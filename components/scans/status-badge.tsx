import { Badge, type BadgeTone } from '@/components/ui';
import type { ScanStatus } from '@/models/files';

/** The states in the order a scan passes through them (kept here so client code never imports the models). */
export const SCAN_STATUS_ORDER: ScanStatus[] = ['uploaded', 'queued', 'reducing', 'reduced', 'failed', 'quarantined'];

/** Words and colours of a scan's state. */
export const SCAN_STATUS_LABELS: Record<ScanStatus, { label: string; tone: BadgeTone; hint: string }> = {
  uploaded: { label: 'Uploaded', tone: 'neutral', hint: 'stored and catalogued, not reduced yet' },
  queued: { label: 'Queued', tone: 'info', hint: 'waiting for a reduction worker' },
  reducing: { label: 'Reducing', tone: 'info', hint: 'a worker is reducing it now' },
  reduced: { label: 'Reduced', tone: 'good', hint: 'a result is available' },
  failed: { label: 'Failed', tone: 'bad', hint: 'the reduction stopped; the reason is on the scan page' },
  quarantined: { label: 'Quarantined', tone: 'warn', hint: 'the file failed validation and waits for review' },
};

export function ScanStatusBadge({ status }: { status: ScanStatus }) {
  const s = SCAN_STATUS_LABELS[status];
  return (
    <span title={s.hint} data-testid="scan-status" data-status={status}>
      <Badge tone={s.tone}>
        <span
          aria-hidden="true"
          className={`inline-block h-1.5 w-1.5 rounded-full ${
            status === 'reducing'
              ? 'animate-pulse bg-lobe-600'
              : status === 'reduced'
                ? 'bg-lobe-600'
                : status === 'failed'
                  ? 'bg-fault-600'
                  : status === 'quarantined'
                    ? 'bg-flare-500'
                    : 'bg-ink-400'
          }`}
        />
        {s.label}
      </Badge>
    </span>
  );
}
