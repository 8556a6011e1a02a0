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

// ARCHIVE, RESTORE AND FIXITY (issue 14) //

/** POST /api/raw-files/[id]/archive and …/restore: nothing to send (an empty object, or no fields). */
export const moveBody = z.strictObject({}, { error: 'This request takes no fields.' });

/** POST /api/campaigns/[campaignId]/archive: archive every online file of the campaign, or restore every archived one. */
export const campaignMoveBody = z.object({
  direction: z.enum(['archive', 'restore'], 'Choose archive or restore.'),
});

/** POST /api/stewardship/fixity: check this many of the least-recently-checked files now. */
export const fixityRunBody = z.object({
  limit: z.coerce
    .number('Give the number of files as a whole number.')
    .int('Give the number of files as a whole number.')
    .min(1, 'Check at least 1 file.')
    .max(10_000, 'Check at most 10 000 files at once.')
    .default(50),
  /** Re-check these files (e.g. after putting back a good copy) instead of the least-recently-checked ones. */
  rawFileIds: z
    .array(z.number().int().positive(), 'List file ids as whole numbers.')
    .min(1, 'Name at least one file.')
    .max(1000, 'Name at most 1000 files at once.')
    .optional(),
});

/** GET /api/stewardship/fixity: the report's list of failures, paged. */
export const fixityReportQuery = z.object({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(5).max(100).default(25),
});
