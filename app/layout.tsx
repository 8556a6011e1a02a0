import type { Metadata, Viewport } from 'next';
import localFont from 'next/font/local';
import { headers } from 'next/headers';
import type { ReactNode } from 'react';
import { Providers } from '@/components/providers';
import './globals.css';

const inter = localFont({
  src: './fonts/InterVariable.woff2',
  variable: '--font-inter',
  display: 'swap',
  weight: '100 900',
});

export const metadata: Metadata = {
  title: { default: 'Lobeline', template: '%s · Lobeline' },
  description: 'From photoelectron momentum-imaging detector files to calibrated, traceable results.',
  robots: { index: false, follow: false },
};

export const viewport: Viewport = { themeColor: '#172031' };

export default async function RootLayout({ children }: { children: ReactNode }) {
  // Reading the request makes every page render per request, which the nonce of proxy.ts's CSP needs.
  await headers();
  return (
    <html lang="en" className={inter.variable}>
      <body className="min-h-screen">
        <Providers>{children}</Providers>
      </body>
    </html>
  );
}
