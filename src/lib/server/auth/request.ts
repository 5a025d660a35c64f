import type { RequestEvent } from '@sveltejs/kit';

/**
 * The client's address as adapter-node reports it (behind a proxy, set
 * ADDRESS_HEADER / XFF_DEPTH so it is the visitor's, not the proxy's).
 */
export function clientAddress(event: Pick<RequestEvent, 'getClientAddress'>): string | null {
	try {
		return event.getClientAddress();
	} catch {
		return null;
	}
}

/** A same-site path to return to after sign-in; anything else becomes '/'. */
export function safeNext(next: string | null | undefined): string {
	if (!next || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) return '/';
	if (next.startsWith('/signin') || next.startsWith('/signout') || next.startsWith('/auth/')) return '/';
	return next;
}
