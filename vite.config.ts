import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' },
	test: {
		include: ['src/**/*.spec.ts', 'tests/**/*.test.ts'],
		environment: 'node',
		testTimeout: 60_000,
		hookTimeout: 120_000,
		// Browser journeys poll the page after a click; a loaded CI machine needs more than 1 s.
		expect: { poll: { timeout: 15_000, interval: 100 } },
		// The browser and integration tests share one app server and database; keep files serial.
		fileParallelism: false
	}
});
