import type { Config } from 'tailwindcss';

/** Syntopy's own palette (every text colour ≥ 4.5:1 on paper, white and its soft tint; WCAG 2.1 SC 1.4.3): slate ink on warm paper, a teal accent, green/magenta for the two channels. */
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
        ink: { DEFAULT: '#1f2a33', soft: '#4a5863', faint: '#5f6b74' },
        accent: { DEFAULT: '#0f766e', soft: '#ccebe7', dark: '#0b524c' },
        // display colours for the image; `ink` is the shade for words (WCAG 2.1 contrast ≥ 4.5:1 on paper and white)
        ch1: { DEFAULT: '#22c55e', ink: '#137333' },
        ch2: { DEFAULT: '#d946ef', ink: '#a21caf' },
        warn: { DEFAULT: '#92400e', soft: '#fdf0dc' },
        danger: { DEFAULT: '#b91c1c', soft: '#fde2e2' },
      },
    },
  },
  plugins: [],
} satisfies Config;
