import type { RequestEvent } from '@sveltejs/kit';
import { clientAddress } from './request';

/** Who, from where, under which request id: what people/tokens/audit calls need. */
export function actionContext(event: Pick<RequestEvent, 'locals' | 'url' | 'getClientAddress'>) {
	const actor = event.locals.user;
	if (!actor) throw new Error('actionContext needs a signed-in user (check the capability first)');
	return { actor, requestId: event.locals.requestId, ip: clientAddress(event), origin: event.url.origin };
}

/** Read a JSON body, or null when it is not JSON (the caller answers 400). */
export async function readJson(request: Request): Promise<unknown> {
	try {
		return await request.json();
	} catch {
		return null;
	}
}
