import { notFound, redirect } from 'next/navigation';
import { KIND_WORDS } from '@/components/ingest/format';
import { ShiftWorkbench } from '@/components/ingest/shift-workbench';
import { Badge, PageHeader, SafetyNotice } from '@/components/ui';
import { getActor } from '@/lib/auth/actor';
import { AppError } from '@/lib/errors';
import { formatDateTime } from '@/lib/format';
import { getShiftReceipt, getShiftView } from '@/lib/ingest/service';

export const dynamic = 'force-dynamic';

export async function generateMetadata({ params }: { params: Promise<{ shiftId: string }> }) {
  return { title: `Shift ${(await params).shiftId}` };
}

// The shift page (C2): campaign and shift, the safety reminder, drop and send files, the log, the end of shift.
export default async function ShiftPage({ params }: { params: Promise<{ shiftId: string }> }) {
  const { shiftId: raw } = await params;
  const shiftId = Number(raw);
  if (!Number.isInteger(shiftId) || shiftId <= 0) notFound();
  const actor = await getActor();
  if (!actor) redirect('/sign-in');
  let view: Awaited<ReturnType<typeof getShiftView>>;
  try {
    view = await getShiftView(actor, shiftId);
  } catch (err) {
    if (err instanceof AppError && (err.type === 'not_found' || err.type === 'forbidden')) notFound();
    throw err;
  }
  const receipt = view.shift.status === 'closed' ? await getShiftReceipt(actor, shiftId) : null;
  const { shift } = view;
  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow={`${shift.team.name} · ${shift.campaign.name}`}
        title={
          <span className="flex flex-wrap items-center gap-3">
            {shift.title}
            <Badge tone={shift.status === 'open' ? 'good' : 'neutral'}>
              {shift.status === 'open' ? 'Open' : 'Closed'}
            </Badge>
          </span>
        }
        description={
          <>
            {KIND_WORDS[shift.campaign.experimentKind] ?? shift.campaign.experimentKind} on {shift.campaign.target} at{' '}
            {shift.campaign.wavelengthNm} nm. Opened {formatDateTime(shift.openedAt)}
            {shift.openedBy ? ` by ${shift.openedBy}` : ''}
            {shift.closedAt
              ? `; closed ${formatDateTime(shift.closedAt)}${shift.closedBy ? ` by ${shift.closedBy}` : ''}`
              : ''}
            .{' '}
            <a href={`/campaigns/${shift.campaign.id}`} className="text-lobe-700 hover:underline">
              Campaign page
            </a>
          </>
        }
      />
      <SafetyNotice compact />
      <ShiftWorkbench initial={view} initialReceipt={receipt} />
    </div>
  );
}
