import type { ReactNode } from 'react';
import { LogoMark } from '@/components/shell/logo';

// Pages for people who are not signed in: sign-in, invitation, password reset. A quiet, centred card.
export default function AuthLayout({ children }: { children: ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col bg-ink-950">
      <div className="pointer-events-none fixed inset-0 overflow-hidden" aria-hidden="true">
        <svg
          className="absolute -top-40 left-1/2 h-[46rem] w-[46rem] -translate-x-1/2 opacity-[0.18]"
          viewBox="0 0 100 100"
        >
          <title>Lobeline backdrop</title>
          <g transform="rotate(-28 50 50)">
            <ellipse cx="33" cy="50" rx="24" ry="13" fill="none" stroke="#33bbac" strokeWidth="0.35" />
            <ellipse cx="33" cy="50" rx="16" ry="8.5" fill="none" stroke="#33bbac" strokeWidth="0.3" />
            <ellipse cx="67" cy="50" rx="24" ry="13" fill="none" stroke="#a0e8dc" strokeWidth="0.35" />
            <ellipse cx="67" cy="50" rx="16" ry="8.5" fill="none" stroke="#a0e8dc" strokeWidth="0.3" />
            <circle cx="50" cy="50" r="40" fill="none" stroke="#7a8b9f" strokeWidth="0.2" strokeDasharray="0.8 1.2" />
          </g>
        </svg>
      </div>
      <main className="relative flex flex-1 items-center justify-center px-4 py-12">
        <div className="w-full max-w-md">
          <div className="mb-6 flex items-center justify-center gap-3">
            <LogoMark className="size-9" />
            <div>
              <p className="text-title font-semibold tracking-tight text-white">Lobeline</p>
              <p className="text-micro text-ink-300">Harbor Point Ultrafast Lab</p>
            </div>
          </div>
          <div className="rounded-panel bg-white px-6 py-7 shadow-xl ring-1 ring-black/5 sm:px-8">{children}</div>
          <p className="mt-6 text-center text-micro text-ink-400">
            From detector file to figure, with every result traceable to its raw data.
          </p>
        </div>
      </main>
    </div>
  );
}
