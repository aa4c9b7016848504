import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter(),
		// The API takes multipart uploads from acquisition PCs, which send no Origin; it is
		// authenticated by bearer token, not cookies. The same-origin check for every other route
		// (pages, actions, Auth.js) is in hooks.server.ts.
		csrf: { trustedOrigins: ['*'] }
	}
};

export default config;
