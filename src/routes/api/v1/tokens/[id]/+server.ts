import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import { actionContext } from '$lib/server/auth/context';
import * as tokens from '$lib/server/auth/tokens';
import { apiError } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Revoke a token: your own, or anyone's for admins. Revoking twice is harmless. */
export const DELETE: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'ownAccount');
	if (denied) return denied;
	const id = Number(event.params.id);
	if (!Number.isSafeInteger(id) || id <= 0) return apiError(404, 'not_found', 'No such token.');
	try {
		const info = await tokens.revokeToken(actionContext(event), id, can(event.locals.user!.role, 'administer'));
		return json({ info });
	} catch (err) {
		if (err instanceof tokens.TokenError) return apiError(404, err.code, err.message);
		throw err;
	}
};
