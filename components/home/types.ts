// Shapes of the JSON the home page reads (GET /api/me, GET /api/campaigns).
import type { ExperimentKind } from '@/reduction/formats';

export interface MeResponse {
  user: { id: number; email: string; name: string };
  memberships: { teamId: number; teamSlug: string; teamName: string; role: 'operator' | 'analyst' | 'pi' }[];
  facilityRoles: ('steward' | 'admin')[];
  currentTeamId: number | null;
  allowed: string[];
  facility: { metadata: boolean; admin: boolean; auditAll: boolean };
}

export interface CampaignRow {
  id: number;
  teamId: number;
  teamName: string;
  name: string;
  target: string;
  wavelengthNm: number;
  experimentKind: ExperimentKind;
  status: 'active' | 'closed';
  shiftCount: number;
  openShiftCount: number;
  scanCount: number;
}

export interface OpenShiftRow {
  id: number;
  teamId: number;
  campaignId: number;
  campaignName: string;
  title: string;
  openedAt: string;
  openedBy: string | null;
}

export interface CampaignsResponse {
  teamId: number | null;
  metadataOnly: boolean;
  campaigns: CampaignRow[];
  openShifts: OpenShiftRow[];
}
