// The end-of-shift receipt (C2, C11): the same record in the e-mail (text and HTML) and on the shift page.
import { formatBytes, formatDateTime } from '@/lib/format';
import type { ShiftViewDto } from './types';

export interface ReceiptLine {
  scanId: number;
  fileName: string;
  sizeBytes: number;
  sha256: string;
  verdict: 'accepted' | 'quarantined' | 'released' | 'replaced';
  duplicateLinked: boolean;
  reasons: string[];
  scanUrl: string;
}

export interface Receipt {
  subject: string;
  shiftTitle: string;
  campaignName: string;
  teamName: string;
  closedAt: string | null;
  closedBy: string | null;
  totals: { files: number; bytes: number; accepted: number; quarantined: number; duplicates: number };
  lines: ReceiptLine[];
  /** Uploads that never finished and were abandoned at closing (not stored). */
  abandoned: { fileName: string; sizeBytes: number }[];
  shiftUrl: string;
}

export function buildReceipt(
  view: Pick<ShiftViewDto, 'shift' | 'files'>,
  origin: string,
  abandoned: { fileName: string; sizeBytes: number }[] = [],
): Receipt {
  const { shift, files } = view;
  const lines: ReceiptLine[] = files.map((f) => ({
    scanId: f.scanId,
    fileName: f.fileName,
    sizeBytes: f.sizeBytes,
    sha256: f.sha256,
    verdict: f.rawStatus,
    duplicateLinked: f.duplicateLinked,
    reasons: f.reasons,
    scanUrl: `${origin}/scans/${f.scanId}`,
  }));
  const quarantined = lines.filter((l) => l.verdict === 'quarantined').length;
  return {
    subject: `Shift receipt: ${shift.title} (${shift.campaign.name}) — ${lines.length} file${lines.length === 1 ? '' : 's'}${quarantined ? `, ${quarantined} quarantined` : ''}`,
    shiftTitle: shift.title,
    campaignName: shift.campaign.name,
    teamName: shift.team.name,
    closedAt: shift.closedAt,
    closedBy: shift.closedBy,
    totals: {
      files: lines.length,
      bytes: lines.reduce((s, l) => s + l.sizeBytes, 0),
      accepted: lines.filter((l) => l.verdict === 'accepted' || l.verdict === 'released').length,
      quarantined,
      duplicates: lines.filter((l) => l.duplicateLinked).length,
    },
    lines,
    abandoned,
    shiftUrl: `${origin}/shifts/${shift.id}`,
  };
}

const VERDICT_WORDS: Record<ReceiptLine['verdict'], string> = {
  accepted: 'accepted',
  quarantined: 'QUARANTINED',
  released: 'released by an analyst',
  replaced: 'replaced by a later upload',
};

export function receiptText(r: Receipt): string {
  const out: string[] = [
    `Lobeline shift receipt`,
    ``,
    `Shift:     ${r.shiftTitle}`,
    `Campaign:  ${r.campaignName} (${r.teamName})`,
    `Closed:    ${r.closedAt ? formatDateTime(r.closedAt) : 'not closed'}${r.closedBy ? ` by ${r.closedBy}` : ''}`,
    `Files:     ${r.totals.files} (${formatBytes(r.totals.bytes)}); ${r.totals.accepted} accepted, ${r.totals.quarantined} quarantined, ${r.totals.duplicates} linked duplicates`,
    ``,
  ];
  r.lines.forEach((l, i) => {
    out.push(
      `${i + 1}. ${l.fileName} — ${VERDICT_WORDS[l.verdict]}${l.duplicateLinked ? ' (identical to a file already stored; linked)' : ''}`,
    );
    out.push(`   size ${l.sizeBytes} bytes (${formatBytes(l.sizeBytes)})`);
    out.push(`   SHA-256 ${l.sha256}`);
    for (const reason of l.reasons) out.push(`   problem: ${reason}`);
    out.push(`   scan: ${l.scanUrl}`);
  });
  if (r.abandoned.length) {
    out.push('', 'Not stored (upload abandoned when the shift was closed):');
    for (const a of r.abandoned) out.push(`  - ${a.fileName} (${formatBytes(a.sizeBytes)})`);
  }
  out.push(
    '',
    `Shift page: ${r.shiftUrl}`,
    '',
    'Quarantined files are kept unchanged in storage; an analyst of the team can release them once the metadata is corrected, or a corrected file can be uploaded to replace them.',
  );
  return out.join('\n');
}

const esc = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

export function receiptHtml(r: Receipt): string {
  const rows = r.lines
    .map((l) => {
      const colour = l.verdict === 'quarantined' ? '#b91c1c' : l.verdict === 'replaced' ? '#64748b' : '#0f766e';
      const reasons = l.reasons.length
        ? `<ul style="margin:4px 0 0 16px;padding:0;color:#7f1d1d">${l.reasons.map((x) => `<li>${esc(x)}</li>`).join('')}</ul>`
        : '';
      return `<tr style="border-top:1px solid #e2e8f0;vertical-align:top">
<td style="padding:6px 8px"><a href="${esc(l.scanUrl)}">${esc(l.fileName)}</a>${l.duplicateLinked ? '<br><small>identical to a stored file; linked</small>' : ''}</td>
<td style="padding:6px 8px;white-space:nowrap">${esc(formatBytes(l.sizeBytes))}<br><small>${l.sizeBytes} B</small></td>
<td style="padding:6px 8px;font-family:monospace;font-size:11px;word-break:break-all">${esc(l.sha256)}</td>
<td style="padding:6px 8px;color:${colour};font-weight:600">${esc(VERDICT_WORDS[l.verdict])}${reasons}</td></tr>`;
    })
    .join('\n');
  const abandoned = r.abandoned.length
    ? `<p><strong>Not stored</strong> (upload abandoned when the shift was closed): ${r.abandoned.map((a) => esc(a.fileName)).join(', ')}</p>`
    : '';
  return `<!doctype html><html><body style="font-family:system-ui,sans-serif;color:#0f172a;font-size:14px">
<h1 style="font-size:18px;margin:0 0 8px">Shift receipt — ${esc(r.shiftTitle)}</h1>
<p style="margin:0 0 12px">${esc(r.campaignName)} · ${esc(r.teamName)} · closed ${esc(r.closedAt ? formatDateTime(r.closedAt) : '—')}${r.closedBy ? ` by ${esc(r.closedBy)}` : ''}</p>
<p style="margin:0 0 12px">${r.totals.files} files, ${esc(formatBytes(r.totals.bytes))}: ${r.totals.accepted} accepted, <span style="color:#b91c1c">${r.totals.quarantined} quarantined</span>, ${r.totals.duplicates} linked duplicates.</p>
<table style="border-collapse:collapse;width:100%"><thead><tr style="text-align:left;background:#f1f5f9">
<th style="padding:6px 8px">File</th><th style="padding:6px 8px">Size</th><th style="padding:6px 8px">SHA-256</th><th style="padding:6px 8px">Verdict</th></tr></thead>
<tbody>${rows}</tbody></table>
${abandoned}
<p><a href="${esc(r.shiftUrl)}">Open the shift in Lobeline</a></p>
<p style="color:#475569;font-size:12px">Quarantined files are kept unchanged in storage; an analyst of the team can release them once the metadata is corrected, or a corrected file can be uploaded to replace them.</p>
</body></html>`;
}
