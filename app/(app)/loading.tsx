import { LoadingBlock } from '@/components/ui/loading-block';

export default function Loading() {
  return (
    <div className="space-y-6">
      <div className="h-8 w-64 animate-pulse rounded bg-ink-100" aria-hidden="true" />
      <div className="rounded-panel bg-white px-5 py-4 shadow-panel ring-1 ring-ink-100">
        <LoadingBlock lines={5} />
      </div>
    </div>
  );
}
