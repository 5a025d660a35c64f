import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build', precompress: false }),
		alias: {},
		// Content-Security-Policy of every page SvelteKit renders. Scripts, styles,
		// fonts and images come from this origin only (fonts are self-hosted
		// @fontsource files under /_app). 'auto' gives SvelteKit's inline
		// hydration script a per-response nonce (a hash on prerendered pages), so
		// no 'unsafe-inline' for scripts.
		// style-src-attr 'unsafe-inline': Svelte renders `style="width:…"` on the
		// server and, when hydrating, does not rewrite an attribute whose text
		// already matches — a blocked attribute would stay unapplied (progress
		// bars, chart legend swatches). Style *attributes* cannot load anything
		// (url() still falls under img-src/font-src 'self'); <style> elements stay
		// restricted to 'self' plus SvelteKit's nonce.
		// frame-ancestors 'none' is sent as a header only (browsers ignore it in <meta>).
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self'],
				'style-src-attr': ['unsafe-inline'],
				'font-src': ['self'],
				'img-src': ['self', 'data:', 'blob:'],
				'connect-src': ['self'],
				'worker-src': ['self'],
				'object-src': ['none'],
				'base-uri': ['self'],
				'form-action': ['self'],
				'frame-ancestors': ['none']
			}
		}
	}
};

export default config;
