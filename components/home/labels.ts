import type { ExperimentKind } from '@/reduction/formats';

export const KIND_LABEL: Record<ExperimentKind, string> = {
  angular_streaking: 'Angular streaking',
  bicircular: 'Bicircular ω + 2ω',
  two_color_phase: 'Two-colour phase scan',
  image: 'Single image',
};

export const ROLE_LABEL: Record<string, string> = {
  operator: 'Operator',
  analyst: 'Analyst',
  pi: 'PI',
  steward: 'Data steward',
  admin: 'Administrator',
};

export function formatWavelength(nm: number): string {
  return `${Number.isInteger(nm) ? nm : nm.toFixed(1)} nm`;
}
