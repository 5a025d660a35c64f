import type { Handle } from '@sveltejs/kit';

/**
 * Response headers every answer of the app carries, pages and API alike.
 * The page Content-Security-Policy itself comes from `kit.csp` in
 * svelte.config.js (it needs SvelteKit's per-response nonce); responses that
 * SvelteKit does not render as a page (JSON, CSV exports, redirects) get a
 * deny-everything policy here, so a JSON body opened directly in a browser can
 * never run or embed anything.
 */
export const SECURITY_HEADERS: Readonly<Record<string, string>> = Object.freeze({
	'x-content-type-options': 'nosniff',
	'referrer-policy': 'strict-origin-when-cross-origin',
	// Older browsers that do not know CSP frame-ancestors.
	'x-frame-options': 'DENY',
	'cross-origin-opener-policy': 'same-origin',
	'permissions-policy': 'camera=(), microphone=(), geolocation=(), payment=(), usb=()'
});

export const NON_PAGE_CSP = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'";

function apply(headers: Headers): void {
	for (const [name, value] of Object.entries(SECURITY_HEADERS)) {
		if (!headers.has(name)) headers.set(name, value);
	}
	if (!headers.has('content-security-policy')) headers.set('content-security-policy', NON_PAGE_CSP);
}

/** Add the security headers to whatever the rest of the hook sequence returns. */
export const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	try {
		apply(response.headers);
		return response;
	} catch {
		// Headers of a Response obtained from fetch() are immutable: copy it.
		const copy = new Response(response.body, response);
		apply(copy.headers);
		return copy;
	}
};
