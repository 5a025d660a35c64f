import { defineConfig } from 'vitest/config';
import { fileURLToPath } from 'node:url';

// Plain Vitest config (not the SvelteKit plugin) so unit tests of the pure
// numerical core and server modules run without a build. `$lib` is aliased by
// hand to match SvelteKit's default.
export default defineConfig({
	resolve: {
		alias: { $lib: fileURLToPath(new URL('./src/lib', import.meta.url)) }
	},
	test: {
		projects: [
			{
				extends: true,
				test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node' }
			},
			{
				extends: true,
				test: {
					name: 'integration',
					include: ['tests/integration/**/*.test.ts'],
					environment: 'node',
					// One PostgreSQL database is shared: run integration files one at a time.
					fileParallelism: false,
					testTimeout: 60_000,
					hookTimeout: 120_000
				}
			},
			{
				extends: true,
				test: {
					name: 'e2e',
					include: ['tests/e2e/**/*.test.ts'],
					environment: 'node',
					fileParallelism: false,
					testTimeout: 60_000,
					hookTimeout: 180_000
				}
			}
		]
	}
});
