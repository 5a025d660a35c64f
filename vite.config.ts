import tailwindcss from '@tailwindcss/vite';
import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vite';

export default defineConfig({
	// Tailwind's plugin must come before SvelteKit's so it sees the components' classes.
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' }
});
