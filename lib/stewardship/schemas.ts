// zod schemas of the stewardship routes (C10, issue 14): retention, embargo, legal hold and deletion.
import { z } from 'zod';

/** A calendar day as YYYY-MM-DD that exists (2027-02-30 is refused), or null to clear it. */
export const dayOrNull = z
  .string()
  .trim()
  .nullish()
  .transform((v) => (v ? v : null))
  .refine(
    (v) => v === null || (/^\d{4}-\d{2}-\d{2}$/.test(v) && new Date(`${v}T00:00:00Z`).toISOString().startsWith(v)),
    {
      message: 'Enter a day as YYYY-MM-DD, e.g. 2036-12-31.',
    },
  );

export const retentionBody = z
  .object({
    retentionUntil: dayOrNull,
    embargoUntil: dayOrNull,
    legalHold: z.boolean().default(false),
    legalHoldNote: z
      .string()
      .trim()
      .max(2000, 'The note may have at most 2000 characters.')
      .nullish()
      .transform((v) => (v ? v : null)),
  })
  .superRefine((v, ctx) => {
    if (v.legalHold && !v.legalHoldNote) {
      ctx.addIssue({
        code: 'custom',
        path: ['legalHoldNote'],
        message: 'Say why the hold applies (who asked, which case).',
      });
    }
  });
export type RetentionBody = z.output<typeof retentionBody>;

export const fileRetentionBody = z.object({
  retentionUntil: dayOrNull,
  embargoUntil: dayOrNull,
  legalHold: z.boolean().default(false),
});

export const reasonBody = z.object({
  reason: z
    .string({ error: 'Give a reason.' })
    .trim()
    .min(10, 'Give a reason of at least 10 characters; it stays in the audit trail.')
    .max(2000, 'The reason may have at most 2000 characters.'),
});
