import { z } from 'zod';
import { ROLES } from '$lib/server/auth/roles';

/** One schema per input, shared by the admin form actions and the JSON API. */
export const InviteInput = z.object({
	email: z.email('Enter a valid e-mail address.').max(320),
	name: z.string().trim().max(200).optional().nullable(),
	role: z.enum(ROLES, 'Choose one of the roles.')
});

export const PersonPatch = z
	.object({
		role: z.enum(ROLES, 'Choose one of the roles.').optional(),
		active: z.boolean().optional(),
		unlock: z.literal(true).optional()
	})
	.refine((v) => v.role !== undefined || v.active !== undefined || v.unlock !== undefined, 'Send role, active or unlock.');

export const AcceptInvitationInput = z
	.object({
		name: z.string().trim().max(200).optional(),
		password: z.string().min(1, 'Choose a password.').max(1000),
		confirm: z.string()
	})
	.refine((v) => v.password === v.confirm, { message: 'The two passwords differ.', path: ['confirm'] });

export const ProfilePatch = z
	.object({
		name: z.string().trim().max(200).nullable().optional(),
		unitPreference: z.enum(['SI', 'US'], 'Choose SI or US.').optional()
	})
	.refine((v) => v.name !== undefined || v.unitPreference !== undefined, 'Send name or unitPreference.');

export const TokenInput = z.object({
	name: z.string().trim().min(1, 'Name the token (e.g. the data system that uses it).').max(100),
	/** ISO date or date-time; empty = never expires. */
	expiresAt: z
		.union([z.iso.datetime({ offset: true }), z.iso.date(), z.literal(''), z.null()])
		.optional()
		.transform((v) => (v ? new Date(v.length === 10 ? `${v}T23:59:59Z` : v) : null)),
	userId: z.uuid('Choose a person.').optional()
});

/** zod issues → the API's error details (field named). */
export function issuesToDetails(error: z.ZodError): { field?: string; message: string }[] {
	return error.issues.map((i) => ({ ...(i.path.length ? { field: i.path.join('.') } : {}), message: i.message }));
}
