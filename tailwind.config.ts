import type { Config } from 'tailwindcss';

/** Syntopy's own palette: slate ink on warm paper, a teal accent, green/magenta for the two channels. */
export default {
  content: ['./index.html', './src/**/*.{ts,tsx}'],
  theme: {
    extend: {
      fontFamily: {
        sans: ['"IBM Plex Sans"', 'system-ui', 'sans-serif'],
        mono: ['"IBM Plex Mono"', 'ui-monospace', 'monospace'],
      },
      colors: {
        paper: '#f7f5f0',
        ink: { DEFAULT: '#1f2a33', soft: '#4a5863', faint: '#8a96a0' },
        accent: { DEFAULT: '#0f766e', soft: '#ccebe7', dark: '#0b524c' },
        ch1: '#22c55e',
        ch2: '#d946ef',
        warn: { DEFAULT: '#b45309', soft: '#fdf0dc' },
        danger: { DEFAULT: '#b91c1c', soft: '#fde2e2' },
      },
    },
  },
  plugins: [],
} satisfies Config;
