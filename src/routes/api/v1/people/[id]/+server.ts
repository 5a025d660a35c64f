import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { denyApi } from '$lib/server/auth/guard';
import { actionContext, readJson } from '$lib/server/auth/context';
import * as people from '$lib/server/people';
import * as audit from '$lib/server/audit';
import { PersonPatch, issuesToDetails } from '$lib/server/people/schemas';
import { apiError } from '$lib/server/http';
import type { RequestHandler } from './$types';

const isUuid = (v: string) => z.uuid().safeParse(v).success;

/** One person with their own history. */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'administer');
	if (denied) return denied;
	const person = isUuid(params.id) ? await people.getPerson(params.id) : null;
	if (!person) return apiError(404, 'not_found', 'No such person.');
	return json({ person, history: await audit.historyOf('user', person.id) });
};

/** Change role, deactivate / reactivate (`active`), or `unlock` after failed attempts. */
export const PATCH: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'administer');
	if (denied) return denied;
	if (!isUuid(event.params.id)) return apiError(404, 'not_found', 'No such person.');
	const parsed = PersonPatch.safeParse(await readJson(event.request));
	if (!parsed.success) return apiError(400, 'invalid', 'The change is not valid.', issuesToDetails(parsed.error));
	const ctx = actionContext(event);
	try {
		let person = await people.getPerson(event.params.id);
		if (!person) return apiError(404, 'not_found', 'No such person.');
		if (parsed.data.role !== undefined) person = await people.changeRole(ctx, event.params.id, parsed.data.role);
		if (parsed.data.active !== undefined) person = await people.setActive(ctx, event.params.id, parsed.data.active);
		if (parsed.data.unlock) person = await people.unlock(ctx, event.params.id);
		return json({ person });
	} catch (err) {
		if (err instanceof people.PeopleError) {
			const status = err.code === 'not_found' ? 404 : err.code === 'last_admin' ? 409 : 400;
			return apiError(status, err.code, err.message, err.field ? [{ field: err.field, message: err.message }] : []);
		}
		throw err;
	}
};
