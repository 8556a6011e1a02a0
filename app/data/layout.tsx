import type { ReactNode } from 'react';
import { LogoMark } from '@/components/shell/logo';

// Public landing pages of datasets (C10): open to anyone, no sign-in, no app navigation.
export default function PublicDataLayout({ children }: { children: ReactNode }) {
  return (
    <div className="min-h-screen bg-ink-50">
      <header className="border-b border-ink-100 bg-white">
        <div className="mx-auto flex max-w-4xl items-center gap-3 px-5 py-3">
          <LogoMark className="size-7" />
          <div>
            <p className="text-body font-semibold tracking-tight text-ink-900">Lobeline</p>
            <p className="text-micro text-ink-500">Harbor Point Ultrafast Lab · public dataset record</p>
          </div>
        </div>
      </header>
      <main className="mx-auto max-w-4xl px-5 py-8">{children}</main>
    </div>
  );
}
