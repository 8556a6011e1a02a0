// The fields of the release form (a quarantined file re-checked with corrected metadata): one entry per
// correctable value of FORMATS §1, with the label the form shows, its unit and the file path it replaces. The form
// shows first the fields the quarantine reasons name, and checks what was typed with zod, in sentences that use
// these labels. The result is the API's `metadataOverride` (lib/ingest/schemas.ts), checked once more by its schema.
import { z } from 'zod';
import { type MetadataOverride, metadataOverrideSchema } from '@/lib/ingest/schemas';

export type ReleaseFieldKey = keyof MetadataOverride;

export interface ReleaseField {
  key: ReleaseFieldKey;
  label: string;
  unit?: string;
  /** Path of FORMATS §1 that the value replaces. */
  path: string;
  input: 'number' | 'text' | 'select' | 'datetime';
  options?: { value: string; label: string }[];
  hint?: string;
}

export const RELEASE_FIELDS: ReleaseField[] = [
  {
    key: 'wavelengthNm',
    label: 'Wavelength',
    unit: 'nm',
    path: '/entry/instrument/source/wavelength',
    input: 'number',
    hint: 'the fundamental, e.g. 800',
  },
  { key: 'target', label: 'Target', path: '/entry/sample/name', input: 'text', hint: 'e.g. He, Ar, N2' },
  {
    key: 'ionizationEnergyEv',
    label: 'Ionization energy',
    unit: 'eV',
    path: '/entry/sample/ionization_energy',
    input: 'number',
  },
  {
    key: 'ellipticity',
    label: 'Ellipticity',
    path: '/entry/instrument/source/ellipticity',
    input: 'number',
    hint: 'from 0 (linear) to 1 (circular)',
  },
  {
    key: 'helicity',
    label: 'Helicity',
    path: '/entry/instrument/source/helicity',
    input: 'select',
    options: [
      { value: '1', label: '+1' },
      { value: '-1', label: '−1' },
    ],
  },
  {
    key: 'fieldRatio',
    label: 'Field ratio F(2ω)/F(ω)',
    path: '/entry/instrument/source/field_ratio',
    input: 'number',
  },
  {
    key: 'majorAxisAngleDeg',
    label: 'Major-axis angle',
    unit: 'deg',
    path: '/entry/instrument/source/major_axis_angle',
    input: 'number',
  },
  {
    key: 'pulseDurationFs',
    label: 'Pulse duration',
    unit: 'fs',
    path: '/entry/instrument/source/pulse_duration',
    input: 'number',
  },
  {
    key: 'experimentKind',
    label: 'Experiment kind',
    path: '/entry/experiment_kind',
    input: 'select',
    options: [
      { value: 'angular_streaking', label: 'Angular streaking' },
      { value: 'bicircular', label: 'Bicircular' },
      { value: 'two_color_phase', label: 'Two-colour phase' },
      { value: 'image', label: 'Single image' },
    ],
  },
  {
    key: 'startTime',
    label: 'Start time',
    path: '/entry/start_time',
    input: 'datetime',
    hint: 'with its offset, e.g. 2026-11-30T21:05:00+01:00',
  },
  { key: 'title', label: 'Title', path: '/entry/title', input: 'text' },
];

const BY_KEY = new Map(RELEASE_FIELDS.map((f) => [f.key, f]));

/** The label with its unit, as the form shows it ("Wavelength (nm)"). */
export function fieldLabel(f: ReleaseField): string {
  return f.unit ? `${f.label} (${f.unit})` : f.label;
}

/** The fields whose file path a quarantine reason names, in form order (all of them stay available). */
export function fieldsNamedBy(reasons: string[]): ReleaseFieldKey[] {
  const text = reasons.join('\n');
  return RELEASE_FIELDS.filter((f) => text.includes(f.path)).map((f) => f.key);
}

/** Values as typed (strings; empty means "leave as stored"). */
export type ReleaseFormValues = Partial<Record<ReleaseFieldKey, string>>;

interface NumberRule {
  min: number;
  max: number;
  /** The minimum itself is not allowed. */
  above?: boolean;
  integer?: boolean;
}

const NUMBER_RULES: Partial<Record<ReleaseFieldKey, NumberRule>> = {
  wavelengthNm: { min: 0, max: 100_000, above: true },
  ionizationEnergyEv: { min: 0, max: 1000, above: true },
  ellipticity: { min: 0, max: 1 },
  fieldRatio: { min: 0, max: 100 },
  majorAxisAngleDeg: { min: -360, max: 360 },
  pulseDurationFs: { min: 0, max: 1e6, above: true },
};

/** An example value for the "write a number" message (typical values, not suggestions for a given file). */
const NUMBER_EXAMPLES: Partial<Record<ReleaseFieldKey, string>> = {
  wavelengthNm: '800',
  ionizationEnergyEv: '24.587',
  ellipticity: '0.87',
  fieldRatio: '0.1',
  majorAxisAngleDeg: '0',
  pulseDurationFs: '6',
};

function rangeWords(f: ReleaseField, r: NumberRule): string {
  const u = f.unit ? ` ${f.unit}` : '';
  if (r.above && r.max >= 1e5) return `more than ${r.min}${u}`;
  return r.above ? `more than ${r.min}${u} and at most ${r.max}${u}` : `from ${r.min} to ${r.max}${u}`;
}

/** zod schema of the form: typed strings → `metadataOverride`, with messages that name the form's labels. */
export const releaseFormSchema = z
  .record(z.string(), z.string().optional())
  .transform((values, ctx): MetadataOverride => {
    const out: Record<string, string | number> = {};
    for (const f of RELEASE_FIELDS) {
      const raw = values[f.key]?.trim() ?? '';
      if (raw === '') continue;
      const label = fieldLabel(f);
      if (f.input === 'number') {
        const rule = NUMBER_RULES[f.key]!;
        const v = Number(raw);
        if (!Number.isFinite(v)) {
          ctx.addIssue({
            code: 'custom',
            path: [f.key],
            message: `${label}: write a number, e.g. ${NUMBER_EXAMPLES[f.key] ?? 1}.`,
          });
          continue;
        }
        if (v < rule.min || v > rule.max || (rule.above && v === rule.min)) {
          ctx.addIssue({ code: 'custom', path: [f.key], message: `${label} must be ${rangeWords(f, rule)}.` });
          continue;
        }
        out[f.key] = v;
      } else if (f.key === 'helicity') {
        out[f.key] = Number(raw);
      } else if (f.input === 'datetime') {
        if (!z.iso.datetime({ offset: true }).safeParse(raw).success) {
          ctx.addIssue({
            code: 'custom',
            path: [f.key],
            message: `${label}: write the date and time with its offset, e.g. 2026-11-30T21:05:00+01:00.`,
          });
          continue;
        }
        out[f.key] = raw;
      } else {
        if (raw.length > (f.key === 'title' ? 255 : 32)) {
          ctx.addIssue({
            code: 'custom',
            path: [f.key],
            message: `${label} must be at most ${f.key === 'title' ? 255 : 32} characters.`,
          });
          continue;
        }
        out[f.key] = raw;
      }
    }
    if (ctx.issues.length > 0) return z.NEVER;
    if (Object.keys(out).length === 0) {
      ctx.addIssue({ code: 'custom', path: [], message: 'Fill in at least one corrected value.' });
      return z.NEVER;
    }
    // The API's own schema once more (same limits), its messages put in the form's words.
    const check = metadataOverrideSchema.safeParse(out);
    if (!check.success) {
      for (const issue of check.error.issues) {
        const f = BY_KEY.get(issue.path[0] as ReleaseFieldKey);
        ctx.addIssue({
          code: 'custom',
          path: issue.path as string[],
          message: f ? `${fieldLabel(f)}: ${issue.message}.` : issue.message,
        });
      }
      return z.NEVER;
    }
    return check.data;
  });

/** Checks the typed values: the override, or one sentence per problem keyed by field. */
export function parseReleaseForm(
  values: ReleaseFormValues,
): { ok: true; override: MetadataOverride } | { ok: false; problems: { key: string; message: string }[] } {
  const r = releaseFormSchema.safeParse(values);
  if (r.success) return { ok: true, override: r.data };
  return {
    ok: false,
    problems: r.error.issues.map((i) => ({ key: String(i.path[0] ?? ''), message: i.message })),
  };
}

/** Result names of `input.overrides` (lib/ingest/override.ts) → the form's fields. */
const BY_RESULT_NAME: Record<string, ReleaseFieldKey> = {
  experiment_kind: 'experimentKind',
  start_time: 'startTime',
  title: 'title',
  target: 'target',
  ionization_energy_ev: 'ionizationEnergyEv',
  wavelength_nm: 'wavelengthNm',
  ellipticity: 'ellipticity',
  helicity: 'helicity',
  major_axis_angle_deg: 'majorAxisAngleDeg',
  field_ratio: 'fieldRatio',
  pulse_duration_fs: 'pulseDurationFs',
};

/** A result's `input.overrides` in the form's words ("Wavelength 800 nm"), one phrase per corrected value. */
export function overridePhrases(overrides: Record<string, string | number> | undefined | null): string[] {
  if (!overrides) return [];
  return Object.entries(overrides).map(([name, value]) => {
    const f = BY_KEY.get(BY_RESULT_NAME[name] as ReleaseFieldKey);
    if (!f) return `${name} ${value}`;
    const shown = f.key === 'helicity' ? (Number(value) > 0 ? '+1' : '−1') : String(value);
    return `${f.label} ${shown}${f.unit ? ` ${f.unit}` : ''}`;
  });
}
