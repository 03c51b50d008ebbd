import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	// Tailwind's plugin goes before sveltekit() (Tailwind v4 + SvelteKit setup).
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' },
	test: {
		projects: [
			{
				extends: true,
				test: { name: 'unit', include: ['src/**/*.spec.ts'], environment: 'node' }
			},
			{
				extends: true,
				test: {
					name: 'integration',
					include: ['tests/integration/**/*.test.ts'],
					environment: 'node',
					// One real MariaDB database shared by the files: run them one after another.
					fileParallelism: false,
					testTimeout: 30_000,
					hookTimeout: 60_000
				}
			}
		]
	}
});
