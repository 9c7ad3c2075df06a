/** Fillcard's own look: warm paper, deep ink, a clay accent. */
/** @type {import('tailwindcss').Config} */
export default {
  content: ['./src/**/*.{astro,html,js,jsx,ts,tsx,md}'],
  theme: {
    extend: {
      colors: {
        paper: { DEFAULT: '#f7f3ec', deep: '#efe8dc', edge: '#ddd3c3' },
        ink: { DEFAULT: '#1f2a30', soft: '#44525a', faint: '#5f6b71' },
        clay: { DEFAULT: '#a4492b', dark: '#7e3520', light: '#e9c9b9' },
        moss: { DEFAULT: '#3f6b4a', light: '#d5e6d7' },
        amber: { DEFAULT: '#8a5a00', light: '#f6e3b8' },
        ember: { DEFAULT: '#a3222a', light: '#f5d3d3' },
        // The studio's own colour in its clients' gallery (set on <body> as --brand; clay when unset).
        brand: 'var(--brand, #a4492b)',
      },
      fontFamily: {
        display: ['Lora', 'Georgia', 'serif'],
        sans: ['"Source Sans 3"', 'system-ui', 'sans-serif'],
      },
      fontSize: {
        caption: ['0.8125rem', { lineHeight: '1.15rem' }],
        body: ['1rem', { lineHeight: '1.55rem' }],
        lead: ['1.1875rem', { lineHeight: '1.8rem' }],
        title: ['1.625rem', { lineHeight: '2.05rem' }],
        headline: ['2.25rem', { lineHeight: '2.6rem' }],
        hero: ['3rem', { lineHeight: '3.3rem' }],
      },
      borderRadius: { card: '0.625rem' },
      boxShadow: { card: '0 1px 2px rgba(31,42,48,.08), 0 4px 14px rgba(31,42,48,.06)' },
    },
  },
  plugins: [],
};
