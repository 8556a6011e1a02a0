import type { BatchDto, CampaignDto, ScanRowDto, TrendPointDto } from '@/lib/db/queries/scans';

export interface CampaignResponse {
  campaign: CampaignDto;
  targets: string[];
  can: {
    viewResults: boolean;
    viewCalibration: boolean;
    editCalibration: boolean;
    approveCalibration: boolean;
    startReduction: boolean;
    upload: boolean;
    viewCitation: boolean;
  };
}
export interface ScanPage {
  rows: ScanRowDto[];
  total: number;
  page: number;
  pageSize: number;
  sort: string;
  dir: 'asc' | 'desc';
}
export type { BatchDto, ScanRowDto, TrendPointDto };
