import type { Config } from 'tailwindcss';
import defaultTheme from 'tailwindcss/defaultTheme';

/** Tallywood's palette: woodland greens and soil browns, with one warm warning colour. */
export default {
  content: ['./src/**/*.{astro,html,js,jsx,ts,tsx,md,mdx}'],
  theme: {
    extend: {
      colors: {
        moss: {
          50: '#f2f6f1', 100: '#e0eadd', 200: '#c1d5bb', 300: '#98b990', 400: '#6f9a66',
          500: '#4f7d47', 600: '#3d6437', 700: '#314f2e', 800: '#293f27', 900: '#1f2f1e',
        },
        loam: {
          50: '#f8f5f1', 100: '#eee7dd', 200: '#dccdb9', 300: '#c4aa8c', 400: '#a98663',
          500: '#8d6a49', 600: '#73553b', 700: '#5c4431', 800: '#4a372a', 900: '#3b2c22',
        },
        lichen: { 50: '#fbfbf4', 100: '#f4f4e2', 200: '#e8e8c4' },
        ember: { 50: '#fdf3ec', 100: '#fae1cd', 500: '#c75b1b', 600: '#a8481a', 700: '#86391a' },
      },
      fontFamily: {
        sans: ['"Work Sans"', ...defaultTheme.fontFamily.sans],
      },
    },
  },
  plugins: [],
} satisfies Config;
