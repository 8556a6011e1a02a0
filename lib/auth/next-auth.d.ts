// Lobeline's additions to the next-auth session and token (see lib/auth/options.ts).
import type { FacilityRole, TeamRole } from '@/lib/policy';

declare module 'next-auth' {
  interface Session {
    userId?: number;
    memberships: { teamId: number; role: TeamRole }[];
    facilityRoles: FacilityRole[];
  }
}

declare module 'next-auth/jwt' {
  interface JWT {
    userId?: number;
    memberships?: { teamId: number; role: TeamRole }[];
    facilityRoles?: FacilityRole[];
  }
}
