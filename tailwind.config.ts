import type { Config } from 'tailwindcss';

// Night-shift palette: a deep blue-grey ground, one calm accent, and status colours that are
// always paired with a word and a shape in the UI (colour is never the only signal). The 700
// shades are for text on the light (daytime) theme, where the 400/500 shades lack contrast.
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
					850: '#141d27',
					800: '#18222e',
					700: '#223041',
					600: '#314457',
					500: '#4f6378',
					400: '#7d93a8',
					300: '#a3b5c6',
					200: '#c9d6e2',
					100: '#e7eef5',
					50: '#f4f7fa'
				},
				lumen: { 700: '#22695f', 600: '#2f8276', 500: '#5fb3a9', 400: '#7fcdc2', 300: '#a6e0d7' },
				alarm: { 700: '#a83325', 600: '#c44a3a', 500: '#e0604f', 400: '#ef8373', 300: '#f6ada1' },
				caution: { 700: '#80570c', 600: '#a87722', 500: '#d9a441', 400: '#e8bf6a', 300: '#f1d699' },
				steady: { 700: '#2b6e38', 600: '#3f8a4e', 500: '#5fae6e', 400: '#82c891', 300: '#aedcb8' }
			}
		}
	}
} satisfies Config;
