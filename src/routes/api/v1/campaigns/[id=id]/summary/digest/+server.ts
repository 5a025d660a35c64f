import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import { clientAddress } from '$lib/server/auth/request';
import * as summary from '$lib/server/summary';
import * as notifications from '$lib/server/notifications';
import type { RequestHandler } from './$types';

/** POST — e-mail the campaign digest to the program managers now (read: anyone who may read the summary may send it; audited). */
export const POST: RequestHandler = async (event) => {
	const { locals, params } = event;
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const user = locals.user!;
	try {
		const r = await notifications.sendDigest(Number(params.id), { trigger: 'on_demand', actor: { id: user.id, email: user.email }, requestId: locals.requestId, ip: clientAddress(event) });
		return json(r, { status: 202 });
	} catch (err) {
		if (err instanceof summary.SummaryError) return apiError(404, 'not_found', err.message);
		throw err;
	}
};
