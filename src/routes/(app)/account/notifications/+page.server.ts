import { requireCapability } from '$lib/server/auth/guard';
import * as notifications from '$lib/server/notifications';
import { clientAddress } from '$lib/server/auth/request';
import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	const user = requireCapability(locals, 'ownAccount', '/account/notifications');
	const prefs = await notifications.preferencesOf(user.id);
	return {
		role: user.role,
		kinds: notifications.NOTIFICATION_KINDS.map((k) => ({ kind: k, ...notifications.KIND_INFO[k], enabled: prefs[k], forRole: (notifications.KIND_INFO[k].roles as string[]).includes(user.role) }))
	};
}) satisfies PageServerLoad;

export const actions = {
	// One form with a checkbox per kind: an unchecked box is absent from the form, so it means "off".
	default: async (event) => {
		const user = requireCapability(event.locals, 'ownAccount', '/account/notifications');
		const form = await event.request.formData();
		// Unchecked boxes are absent, so an empty post would turn everything off:
		// require the form's own marker so only this page's form can save.
		if (form.get('form') !== 'notification-preferences') {
			return fail(400, { ok: false, message: 'This is not the notification settings form; nothing was changed.' });
		}
		const prefs = Object.fromEntries(notifications.NOTIFICATION_KINDS.map((k) => [k, form.get(k) === 'on'])) as notifications.Preferences;
		await notifications.setPreferences({ id: user.id, email: user.email }, prefs, { requestId: event.locals.requestId, ip: clientAddress(event) });
		return { ok: true, message: 'Saved.' };
	}
} satisfies Actions;
