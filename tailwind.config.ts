import type { Config } from 'tailwindcss'

// Tercet's palette: warm paper, ink-blue text and rules, one copper accent; verdict colours always come with a word.
export default <Partial<Config>>{
  content: ['./app/**/*.{vue,ts}'],
  theme: {
    extend: {
      colors: {
        paper: { DEFAULT: '#f7f3ea', deep: '#efe8d8', edge: '#e2d9c4' },
        ink: { DEFAULT: '#1d2b45', soft: '#3d4b66', faint: '#6b7690', rule: '#c9cfdb' },
        copper: { DEFAULT: '#b8662a', light: '#e9b98f', dark: '#8c4a1a' },
        verdict: {
          pass: '#2f6b3a', passbg: '#dcebd9',
          fail: '#a3262a', failbg: '#f4d9d6',
          marginal: '#8a5a00', marginalbg: '#f6e6bf',
          info: '#3d4b66', infobg: '#e3e7ef',
        },
        night: { DEFAULT: '#0f1624', panel: '#182235', rule: '#2a3650', text: '#dfe5f0' },
      },
      fontFamily: {
        sans: ['Inter', 'system-ui', 'sans-serif'],
        mono: ['"Roboto Mono"', 'ui-monospace', 'monospace'],
      },
    },
  },
}
