// The per-step table of a result (FORMATS §4) as CSV: one row per step and lobe, step columns repeated on each lobe
// row, units in the header. Pure (used by the download route and the tests).
import type { LobelineResult } from '@/reduction/formats';

const HEADER = [
  'step_index',
  'step_value',
  'step_units',
  'total_counts',
  'step_offset_deg',
  'step_offset_err_deg',
  'radius_au',
  'radius_err_au',
  'intensity_from_radius_Wcm2',
  'intensity_from_radius_err_Wcm2',
  'lobe',
  'lobe_angle_deg',
  'lobe_angle_err_deg',
  'lobe_expected_deg',
  'lobe_offset_deg',
  'lobe_offset_err_deg',
  'lobe_radius_au',
  'lobe_transverse_shift_au',
  'lobe_width_deg',
];

function cell(v: unknown): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  const s = String(v);
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function resultToCsv(result: LobelineResult): string {
  const lines = [HEADER.join(',')];
  for (const s of result.steps) {
    const head = [
      s.index,
      s.value,
      result.input.step_units,
      s.total_counts,
      s.offset_deg,
      s.offset_err_deg,
      s.radius_au,
      s.radius_err_au,
      s.intensity_from_radius_Wcm2,
      s.intensity_from_radius_err_Wcm2,
    ];
    if (!s.lobes.length) lines.push([...head, '', '', '', '', '', '', '', '', ''].map(cell).join(','));
    s.lobes.forEach((l, i) => {
      lines.push(
        [
          ...head,
          i + 1,
          l.angle_deg,
          l.angle_err_deg,
          l.expected_deg,
          l.offset_deg,
          l.offset_err_deg,
          l.radius_au,
          l.transverse_shift_au,
          l.width_deg,
        ]
          .map(cell)
          .join(','),
      );
    });
  }
  return `${lines.join('\n')}\n`;
}
