import type { Config } from 'tailwindcss';

// Night-shift palette: a deep blue-grey ground, one calm accent, and status colours that are
// always paired with a word and a shape in the UI (colour is never the only signal).
export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	darkMode: 'class',
	theme: {
		extend: {
			fontFamily: {
				sans: ['"Space Grotesk"', 'ui-sans-serif', 'system-ui', 'sans-serif']
			},
			colors: {
				night: {
					950: '#0b1016',
					900: '#111821',
					800: '#18222e',
					700: '#223041',
					600: '#314457',
					400: '#7d93a8',
					200: '#c9d6e2',
					100: '#e7eef5'
				},
				lumen: { 500: '#5fb3a9', 400: '#7fcdc2', 300: '#a6e0d7' },
				alarm: { 500: '#e0604f', 400: '#ef8373' },
				caution: { 500: '#d9a441', 400: '#e8bf6a' },
				steady: { 500: '#5fae6e', 400: '#82c891' }
			}
		}
	}
} satisfies Config;
