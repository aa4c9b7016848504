import type { Config } from 'tailwindcss';

// Phonotherm's own theme: a calm slate ground with one accent ("ember", a warm copper that
// reads as heat without shouting) and status colours chosen for WCAG AA contrast on white.
export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	theme: {
		extend: {
			colors: {
				ember: {
					50: '#fdf5ef',
					100: '#fae6d7',
					200: '#f3c8a9',
					300: '#eaa374',
					400: '#df7b45',
					500: '#c85f28',
					600: '#a84a1e',
					700: '#86391a',
					800: '#6b2f19',
					900: '#572816'
				},
				ink: {
					50: '#f6f7f9',
					100: '#eceef2',
					200: '#d5d9e1',
					300: '#b0b8c6',
					400: '#8592a6',
					500: '#66738a',
					600: '#515c71',
					700: '#434b5c',
					800: '#3a404e',
					900: '#22262f'
				},
				ok: { 600: '#1d7a46', 50: '#ecf8f1' },
				caution: { 700: '#8a5a00', 50: '#fff8e6' },
				fault: { 700: '#b3261e', 50: '#fdeeed' }
			},
			fontFamily: {
				sans: ['"Inter Variable"', 'system-ui', 'sans-serif'],
				mono: ['"JetBrains Mono"', 'ui-monospace', 'monospace']
			},
			spacing: {
				gutter: '1.25rem',
				rail: '15rem'
			},
			maxWidth: {
				page: '80rem'
			}
		}
	}
} satisfies Config;
