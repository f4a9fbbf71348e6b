import type { Metadata } from 'next';
import localFont from 'next/font/local';
import './globals.css';
import { AppHeader } from '@/components/app-header';
import { Cautions } from '@/components/cautions';

// Fonts ship in the repository (SIL Open Font License, see app/fonts/LICENSE-*.txt): no network at build or run time.
const sans = localFont({
  src: [
    { path: './fonts/atkinson-hyperlegible-next-latin-400-normal.woff2', weight: '400', style: 'normal' },
    { path: './fonts/atkinson-hyperlegible-next-latin-400-italic.woff2', weight: '400', style: 'italic' },
    { path: './fonts/atkinson-hyperlegible-next-latin-600-normal.woff2', weight: '600', style: 'normal' },
    { path: './fonts/atkinson-hyperlegible-next-latin-700-normal.woff2', weight: '700', style: 'normal' },
  ],
  variable: '--font-sans',
  display: 'swap',
});
const mono = localFont({
  src: [
    { path: './fonts/ibm-plex-mono-latin-400-normal.woff2', weight: '400', style: 'normal' },
    { path: './fonts/ibm-plex-mono-latin-500-normal.woff2', weight: '500', style: 'normal' },
  ],
  variable: '--font-mono',
  display: 'swap',
});

export const metadata: Metadata = {
  title: { default: 'Excursion', template: '%s · Excursion' },
  description: 'Research data capture for multi-site randomised studies in hand therapy.',
};

export default function RootLayout({ children }: { children: React.ReactNode }) {
  return (
    <html lang="en-GB" className={`${sans.variable} ${mono.variable}`}>
      <body className="flex min-h-screen flex-col">
        <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:bg-paper-raised focus:p-2">
          Skip to content
        </a>
        <AppHeader />
        <main id="main" className="mx-auto w-full max-w-page flex-1 px-4 py-5">
          {children}
        </main>
        <Cautions />
      </body>
    </html>
  );
}
