import type { Config } from 'tailwindcss';

/**
 * Cairnfield's palette: calm, high-contrast, legible outdoors. Names are ours:
 * peat (ink), fell (primary green-blue), moss (success), ochre (attention), rust (danger), mist (paper).
 */
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	theme: {
		extend: {
			colors: {
				peat: { 50: '#f4f6f5', 100: '#e3e8e6', 200: '#c5cfcb', 300: '#9fb0a9', 500: '#5b6f67', 600: '#45574f', 700: '#2f3f39', 800: '#22302b', 900: '#17211d' },
				fell: { 50: '#eef6f7', 100: '#d5e9ec', 300: '#7fb5bf', 500: '#2f7f8e', 600: '#226a78', 700: '#1b5662', 800: '#17454f' },
				moss: { 100: '#e3f1df', 600: '#3f7a36', 700: '#336329' },
				ochre: { 50: '#fdf8ec', 100: '#fbefd3', 500: '#c98a12', 700: '#8a5d07' },
				rust: { 100: '#f8e1dc', 600: '#b2412b', 700: '#8f3322' },
				mist: '#f7f7f3'
			},
			fontFamily: {
				sans: ['"Inter Variable"', 'ui-sans-serif', 'system-ui', 'sans-serif']
			}
		}
	}
} satisfies Config;
