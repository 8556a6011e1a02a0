import { z } from 'zod';
import { idParam } from '@/lib/api/route';
import { FACILITY_ROLES, TEAM_ROLES } from '@/lib/policy';

export const teamRole = z.enum(TEAM_ROLES, 'Choose operator, analyst or PI.');
export const facilityRole = z.enum(FACILITY_ROLES, 'Choose steward or admin.');

export const inviteBody = z
  .object({
    email: z
      .string({ error: 'Enter an e-mail address.' })
      .trim()
      .toLowerCase()
      .pipe(z.email('Enter a valid e-mail address.').max(254, 'The e-mail address is too long.')),
    name: z
      .string()
      .trim()
      .max(120, 'The name may have at most 120 characters.')
      .optional()
      .transform((v) => (v ? v : null)),
    teamId: idParam.optional().nullable(),
    role: teamRole.optional().nullable(),
    facilityRole: facilityRole.optional().nullable(),
  })
  .superRefine((v, ctx) => {
    if (v.teamId && !v.role) ctx.addIssue({ code: 'custom', path: ['role'], message: 'Choose the role in the team.' });
    if (v.role && !v.teamId) ctx.addIssue({ code: 'custom', path: ['teamId'], message: 'Choose the team.' });
    if (!v.teamId && !v.facilityRole) {
      ctx.addIssue({ code: 'custom', path: ['teamId'], message: 'Choose a team and role, or a facility role.' });
    }
  });

export const membershipBody = z.object({ userId: idParam, teamId: idParam, role: teamRole });
export const membershipQuery = z.object({ userId: idParam, teamId: idParam });
export const facilityRoleBody = z.object({ userId: idParam, role: facilityRole });
export const userStatusBody = z.object({ isActive: z.boolean({ error: 'isActive must be true or false.' }) });
export const userIdParams = z.object({ userId: idParam });

export const createTeamBody = z.object({
  slug: z
    .string({ error: 'Enter a short name.' })
    .trim()
    .toLowerCase()
    .regex(/^[a-z][a-z0-9-]{1,63}$/, 'Use 2–64 lower-case letters, digits or hyphens, starting with a letter.'),
  name: z
    .string({ error: 'Enter the team name.' })
    .trim()
    .min(3, 'The name needs at least 3 characters.')
    .max(120, 'The name may have at most 120 characters.'),
  description: z
    .string()
    .trim()
    .max(2000, 'The description may have at most 2000 characters.')
    .optional()
    .transform((v) => (v ? v : null)),
});
