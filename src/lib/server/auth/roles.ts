/**
 * The one table of who may do what (DESIGN.md "Roles"). Every page, form
 * action and API route asks `can(role, capability)`; nothing else encodes roles.
 */
export const ROLES = ['admin', 'test_engineer', 'aerodynamicist', 'program_manager'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
	admin: 'Admin',
	test_engineer: 'Test engineer',
	aerodynamicist: 'Aerodynamicist',
	program_manager: 'Program manager'
};

export const CAPABILITIES = {
	/** Read campaigns, runs, summaries and exports. */
	read: ['admin', 'test_engineer', 'aerodynamicist', 'program_manager'],
	/** Create campaigns, edit runs, flag points, re-reduce. */
	editRuns: ['admin', 'test_engineer', 'aerodynamicist'],
	/** Upload run files (aerodynamicists edit but do not import). */
	importRuns: ['admin', 'test_engineer'],
	/** Configurations, predictions, tolerances, sign-off. */
	editModels: ['admin', 'aerodynamicist'],
	signOff: ['admin', 'aerodynamicist'],
	/** Own account: profile, unit preference, own API tokens. */
	ownAccount: ['admin', 'test_engineer', 'aerodynamicist', 'program_manager'],
	/** People, roles, facilities, tokens for others, the audit trail. */
	administer: ['admin']
} as const satisfies Record<string, readonly Role[]>;

export type Capability = keyof typeof CAPABILITIES;

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}

export function can(role: Role | null | undefined, capability: Capability): boolean {
	return role != null && (CAPABILITIES[capability] as readonly Role[]).includes(role);
}

/** Every capability a role has, e.g. for the navigation frame (which cannot import this server module). */
export function capabilitiesOf(role: Role | null | undefined): Capability[] {
	return (Object.keys(CAPABILITIES) as Capability[]).filter((c) => can(role, c));
}
