import { z } from 'zod';
import { idParam } from '@/lib/api/route';
import { EXPERIMENT_KINDS } from '@/reduction/formats';

export const listCampaignsQuery = z.object({
  /** A team id; without it the current team (or, for stewards without a team, every team). */
  teamId: idParam.optional(),
  /** `all`: every team the caller may see metadata of (stewards). */
  scope: z.enum(['all']).optional(),
});

export const createCampaignBody = z.object({
  teamId: idParam.optional(),
  name: z
    .string({ error: 'Enter a name.' })
    .trim()
    .min(3, 'The name needs at least 3 characters.')
    .max(160, 'The name may have at most 160 characters.'),
  target: z
    .string({ error: 'Enter the target gas or molecule.' })
    .trim()
    .min(1, 'Enter the target gas or molecule.')
    .max(32, 'The target may have at most 32 characters.')
    .regex(/^[A-Za-z0-9()+\- ]+$/, 'Use letters, digits, spaces and ( ) + - only, e.g. "Ar" or "N2".'),
  wavelengthNm: z.coerce
    .number({ error: 'Enter the fundamental wavelength in nm.' })
    .refine(Number.isFinite, 'Enter the fundamental wavelength in nm.')
    .min(100, 'The wavelength must be between 100 and 20 000 nm.')
    .max(20_000, 'The wavelength must be between 100 and 20 000 nm.'),
  experimentKind: z.enum(EXPERIMENT_KINDS, 'Choose the kind of experiment.'),
  description: z
    .string()
    .trim()
    .max(2000, 'The description may have at most 2000 characters.')
    .optional()
    .transform((v) => (v ? v : null)),
});
export type CreateCampaignBody = z.infer<typeof createCampaignBody>;
