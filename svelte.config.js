import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter(),
		// Uploads from acquisition PCs are bigger than the default body limit; routes enforce their own.
		csrf: { trustedOrigins: [] }
	}
};

export default config;
