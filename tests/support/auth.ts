/**
 * API tokens for integration tests: created directly through the sign-in
 * engineer's token module (src/lib/server/auth/tokens.ts) against the test
 * database, so upload tests act as scripts with `Authorization: Bearer`.
 */
import { QueryTypes } from 'sequelize';
import { getSequelize } from '../../src/lib/server/db';
import { createToken } from '../../src/lib/server/auth/tokens';
import type { Role } from '../../src/lib/server/auth/roles';
import { DEMO_ACCOUNTS } from '../../src/lib/server/db/seed-data';

export async function tokenFor(role: Role): Promise<string> {
	const account = DEMO_ACCOUNTS.find((a) => a.role === role)!;
	const [user] = await getSequelize().query<{ id: string; name: string | null; email: string; role: Role }>(
		'SELECT id, name, email, role FROM users WHERE email = :email',
		{ replacements: { email: account.email }, type: QueryTypes.SELECT }
	);
	if (!user) throw new Error(`demo account ${account.email} is not in the test database`);
	const { token } = await createToken({ actor: user }, { ownerId: user.id, name: `integration test ${Date.now()}` });
	return token;
}
