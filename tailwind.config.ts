import type { Config } from 'tailwindcss';

/**
 * Lobeline's palette and type scale.
 *
 * The palette is built around a deep "night-lab" slate for structure, a photoelectron teal
 * for primary actions and a warm amber for the things that need an operator's attention
 * (quarantine, warnings, safety reminders). Data colours for plots live in lib/plot-colors.ts.
 */
const config: Config = {
  content: ['./app/**/*.{ts,tsx}', './components/**/*.{ts,tsx}'],
  theme: {
    extend: {
      colors: {
        ink: {
          50: '#f4f6f8',
          100: '#e6eaef',
          200: '#cbd3dc',
          300: '#a5b2c1',
          400: '#7a8b9f',
          500: '#5a6b80',
          600: '#45546a',
          700: '#354256',
          800: '#253043',
          900: '#172031',
          950: '#0d1420',
        },
        lobe: {
          50: '#ecfbf8',
          100: '#cff4ed',
          200: '#a0e8dc',
          300: '#66d5c6',
          400: '#33bbac',
          500: '#179f92',
          600: '#0f8077',
          700: '#116661',
          800: '#13514e',
          900: '#134442',
        },
        flare: {
          50: '#fff8eb',
          100: '#feeac7',
          200: '#fdd38a',
          300: '#fbb64d',
          400: '#f99a25',
          500: '#e3770c',
          600: '#c15807',
          700: '#9b3d0a',
          800: '#7e310f',
          900: '#682a10',
        },
        fault: {
          50: '#fdf2f2',
          100: '#fbe1e1',
          500: '#c93a3a',
          600: '#ab2b2b',
          700: '#8c2424',
        },
      },
      fontFamily: {
        sans: ['var(--font-inter)', 'ui-sans-serif', 'system-ui', 'sans-serif'],
        mono: ['ui-monospace', 'SFMono-Regular', 'Menlo', 'monospace'],
      },
      fontSize: {
        // A modular scale (ratio 1.2) anchored at 15 px body text.
        micro: ['0.6875rem', { lineHeight: '1rem', letterSpacing: '0.02em' }],
        small: ['0.8125rem', { lineHeight: '1.25rem' }],
        body: ['0.9375rem', { lineHeight: '1.5rem' }],
        lead: ['1.125rem', { lineHeight: '1.75rem' }],
        title: ['1.35rem', { lineHeight: '1.9rem', letterSpacing: '-0.01em' }],
        display: ['1.62rem', { lineHeight: '2.1rem', letterSpacing: '-0.015em' }],
      },
      borderRadius: {
        panel: '0.625rem',
      },
      boxShadow: {
        panel: '0 1px 2px rgba(13, 20, 32, 0.06), 0 1px 8px rgba(13, 20, 32, 0.04)',
      },
    },
  },
  plugins: [],
};

export default config;
