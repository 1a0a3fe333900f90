import type { Config } from 'tailwindcss'

// Loopwright's own palette and type scale. Ink is a deep slate-teal for text and
// the header; signal is a warm copper kept for focus and the one action that
// matters on a screen; paper is the warm off-white of a printed sheet; rule is
// the hairline between rows. Contrast pairs used for text meet WCAG 2.x AA
// (checked with the relative-luminance formula of WCAG 2.x §1.4.3).
export default {
  content: ['./app/**/*.{vue,ts}'],
  theme: {
    extend: {
      colors: {
        ink: {
          50: '#f1f6f6',
          100: '#dfeaeb',
          200: '#bfd5d7',
          300: '#93b6b9',
          400: '#5f8f94',
          500: '#3f7277',
          600: '#2e5c61',
          700: '#23494e',
          800: '#1b3a3e',
          900: '#142c30',
          950: '#0c1d20',
        },
        signal: {
          50: '#fdf4ea',
          100: '#f9e3cb',
          200: '#f2c494',
          300: '#e9a25e',
          400: '#dd8437',
          500: '#c56a1f',
          600: '#a35418',
          700: '#824216',
          800: '#613214',
        },
        paper: {
          50: '#fdfbf6',
          100: '#f7f3ea',
          200: '#eee7d8',
          300: '#ddd3bf',
        },
        rule: {
          DEFAULT: '#cfd8d6',
          strong: '#9fb0ad',
        },
        fault: {
          50: '#fbeeec',
          200: '#efc2bb',
          700: '#a12b22',
          800: '#7f2119',
        },
        sound: {
          50: '#eef5ea',
          200: '#c3dcb5',
          700: '#3b6a26',
          800: '#2d521d',
        },
      },
      fontFamily: {
        sans: ['"Noto Sans"', '"Noto Sans Math"', '"Noto Serif"', 'system-ui', 'sans-serif'],
        serif: ['"Noto Serif"', '"Noto Sans Math"', 'Georgia', 'serif'],
        mono: ['"Noto Sans Mono"', '"Noto Sans Math"', '"Noto Serif"', 'ui-monospace', 'monospace'],
      },
      // A 1.2 ratio on a 15 px body: small enough for dense tables, calm for reading.
      fontSize: {
        caption: ['0.75rem', { lineHeight: '1rem', letterSpacing: '0.02em' }],
        note: ['0.8125rem', { lineHeight: '1.25rem' }],
        body: ['0.9375rem', { lineHeight: '1.5rem' }],
        lead: ['1.125rem', { lineHeight: '1.75rem' }],
        heading: ['1.35rem', { lineHeight: '1.875rem' }],
        title: ['1.62rem', { lineHeight: '2.125rem' }],
        display: ['1.95rem', { lineHeight: '2.4rem' }],
      },
      boxShadow: {
        sheet: '0 1px 0 #ddd3bf, 0 2px 6px -2px rgba(20, 44, 48, 0.12)',
      },
      maxWidth: {
        page: '72rem',
      },
    },
  },
} satisfies Config
