import { requireCapability } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import type { PageServerLoad } from './$types';

// The run, its points and its charts come from /api/v1/runs/{id} in the
// client (the same API scripts use); the load only checks access and says
// what the role may do, so buttons can be shown or explained.
export const load = (async ({ locals, params, url }) => {
	const user = requireCapability(locals, 'read', url.pathname);
	return {
		runId: Number(params.id),
		canEdit: can(user.role, 'editRuns'),
		canSignOff: can(user.role, 'signOff')
	};
}) satisfies PageServerLoad;
