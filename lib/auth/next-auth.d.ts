// Lobeline's additions to the next-auth session and token (see lib/auth/options.ts).
import type { FacilityRole, TeamRole } from '@/lib/policy';

declare module 'next-auth' {
  interface Session {
    userId?: number;
    /** Session version the token was issued with (see lib/auth/actor.ts). */
    sessionVersion?: number;
    memberships: { teamId: number; role: TeamRole }[];
    facilityRoles: FacilityRole[];
  }
}

declare module 'next-auth/jwt' {
  interface JWT {
    userId?: number;
    /** The account's session version at sign-in; a later sign-out or password change raises the account's. */
    sv?: number;
    memberships?: { teamId: number; role: TeamRole }[];
    facilityRoles?: FacilityRole[];
  }
}
