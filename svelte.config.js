import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's CSRF origin check is on by default and stays on (no trustedOrigins are added).
		adapter: adapter()
	}
};

export default config;
