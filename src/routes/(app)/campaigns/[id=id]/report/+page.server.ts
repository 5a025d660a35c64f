import { error } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import * as summary from '$lib/server/summary';
import type { PageServerLoad } from './$types';

// A print page: rendered on the server in one piece so the browser's print
// dialog sees the whole report without waiting for client fetches.
export const load = (async ({ locals, params, url }) => {
	requireCapability(locals, 'read', url.pathname);
	let s: summary.SummaryFacts;
	try {
		s = await summary.getSummaryFacts(Number(params.id));
	} catch (err) {
		if (err instanceof summary.SummaryError) error(404, { message: 'There is no campaign with this number.', code: 'not_found' });
		throw err;
	}
	return { summary: s };
}) satisfies PageServerLoad;
