import type { Config } from 'tailwindcss';

// Excursion's design tokens: calm, dense and high-contrast for long data-entry sessions.
// Ink on a warm paper ground, one deep "glide" accent, and status colours that never carry meaning alone.
const config: Config = {
  content: ['./app/**/*.{ts,tsx}', './components/**/*.{ts,tsx}'],
  theme: {
    extend: {
      colors: {
        ink: { DEFAULT: '#16212b', soft: '#3b4a57', faint: '#5c6b78' },
        paper: { DEFAULT: '#f6f4ef', raised: '#ffffff', sunk: '#ebe8e0' },
        line: { DEFAULT: '#cfc9bc', strong: '#8f897c' },
        glide: { DEFAULT: '#0f5563', hover: '#0b4350', tint: '#dcebed' },
        focus: '#b3541e',
        ok: { DEFAULT: '#1d6b3a', tint: '#e0f0e5' },
        warn: { DEFAULT: '#8a5a00', tint: '#fbf0d9' },
        danger: { DEFAULT: '#9e2a1c', tint: '#f8e3df' },
      },
      fontFamily: {
        sans: ['var(--font-sans)', 'system-ui', 'sans-serif'],
        mono: ['var(--font-mono)', 'ui-monospace', 'monospace'],
      },
      fontSize: {
        xs: ['0.75rem', { lineHeight: '1.1rem' }],
        sm: ['0.8125rem', { lineHeight: '1.2rem' }],
        base: ['0.9375rem', { lineHeight: '1.4rem' }],
        lg: ['1.0625rem', { lineHeight: '1.5rem' }],
        xl: ['1.25rem', { lineHeight: '1.7rem' }],
        '2xl': ['1.5rem', { lineHeight: '2rem' }],
      },
      borderRadius: { DEFAULT: '3px', md: '4px' },
      maxWidth: { page: '78rem' },
    },
  },
};

export default config;
