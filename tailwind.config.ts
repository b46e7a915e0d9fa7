import type { Config } from 'tailwindcss'
import defaultTheme from 'tailwindcss/defaultTheme'

/**
 * Counterpoise's own palette (see DESIGN in DEVELOPERS.md):
 * ink (deep blue-green: text, headers), brass (warm gold: efficient, the beam),
 * sea (sea-glass: pale green-grey surfaces), slate (greys: dominated, secondary text),
 * rust (limits and errors). Text shades were checked for WCAG AA (4.5:1) on `sea-50` and white;
 * tests/unit/shared/palette.test.ts recomputes the ratios from these values.
 */
export const palette = {
  ink: {
    50: '#eef6f5', 100: '#d5e8e6', 200: '#a9d0cc', 300: '#75b0ab', 400: '#468e89',
    500: '#2c716d', 600: '#1f5b58', 700: '#184a48', 800: '#12393a', 900: '#0c2829', 950: '#061718',
  },
  brass: {
    50: '#fdf8ec', 100: '#f8ecc9', 200: '#f0d78f', 300: '#e6bd55', 400: '#d9a22f',
    500: '#bf8520', 600: '#9c6819', 700: '#7a5017', 800: '#5f3f16', 900: '#4a3113', 950: '#2a1a08',
  },
  sea: {
    50: '#f4f7f5', 100: '#e7eeea', 200: '#d3ded8', 300: '#b5c7be', 400: '#92aa9e',
  },
  slate: {
    50: '#f6f7f8', 100: '#eceef0', 200: '#d8dce0', 300: '#b7bec5', 400: '#8d97a1',
    500: '#6b7682', 600: '#55606b', 700: '#454e57', 800: '#343b42', 900: '#23282d', 950: '#14171a',
  },
  rust: {
    50: '#fcf3ef', 100: '#f8e1d7', 200: '#f0c0ab', 300: '#e4977a', 400: '#d46d4c',
    500: '#b9502f', 600: '#9c3f25', 700: '#7e3220', 800: '#62281b', 900: '#4b2016',
  },
} as const

export default {
  darkMode: 'class',
  content: [
    './app/**/*.{vue,ts}',
    './shared/**/*.ts',
  ],
  theme: {
    extend: {
      colors: { ...palette, white: '#ffffff' },
      fontFamily: {
        sans: ['Nunito', ...defaultTheme.fontFamily.sans],
      },
      fontSize: {
        // A type scale of our own: a little larger than usual, for phones held at arm's length.
        'xs': ['0.8125rem', { lineHeight: '1.15rem' }],
        'sm': ['0.9375rem', { lineHeight: '1.35rem' }],
        'base': ['1.0625rem', { lineHeight: '1.6rem' }],
        'lg': ['1.25rem', { lineHeight: '1.75rem' }],
        'xl': ['1.5rem', { lineHeight: '2rem' }],
        '2xl': ['1.875rem', { lineHeight: '2.3rem' }],
        '3xl': ['2.375rem', { lineHeight: '2.75rem' }],
        'gallery': ['4rem', { lineHeight: '4.5rem' }],
      },
      borderRadius: {
        card: '1.125rem',
        field: '0.625rem',
      },
      boxShadow: {
        card: '0 1px 2px rgb(18 57 58 / 0.06), 0 4px 16px rgb(18 57 58 / 0.06)',
      },
      minHeight: { touch: '2.75rem' },
      minWidth: { touch: '2.75rem' },
    },
  },
} satisfies Config
