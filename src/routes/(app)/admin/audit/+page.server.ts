import { requireCapability } from '$lib/server/auth/guard';
import * as audit from '$lib/server/audit';
import type { PageServerLoad } from './$types';

const PAGE_SIZE = 100;

export const load = (async ({ locals, url }) => {
	requireCapability(locals, 'administer', '/admin/audit');
	const q = url.searchParams;
	const page = Math.max(1, Number(q.get('page') ?? 1) || 1);
	const date = (v: string | null) => (v && /^\d{4}-\d{2}-\d{2}$/.test(v) ? new Date(`${v}T00:00:00Z`) : undefined);
	const until = date(q.get('until'));
	const filter = {
		action: q.get('action') || undefined,
		entityType: q.get('entityType') || undefined,
		entityId: q.get('entityId') || undefined,
		actor: q.get('actor') || undefined,
		since: date(q.get('since')),
		// The "until" day is included.
		until: until ? new Date(until.getTime() + 86_400_000) : undefined
	};
	const { events, total } = await audit.listEvents({ ...filter, limit: PAGE_SIZE, offset: (page - 1) * PAGE_SIZE });
	return {
		events,
		total,
		page,
		pages: Math.max(1, Math.ceil(total / PAGE_SIZE)),
		query: Object.fromEntries(['action', 'entityType', 'entityId', 'actor', 'since', 'until'].map((k) => [k, q.get(k) ?? '']))
	};
}) satisfies PageServerLoad;
