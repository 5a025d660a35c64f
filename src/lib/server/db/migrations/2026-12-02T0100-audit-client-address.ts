// The audit trail records from which client address each event came
// (issue 4: "who, what, which entity, when, from which address").
import { sql, type MigrationContext } from './types';

export async function up(ctx: MigrationContext): Promise<void> {
	await sql(ctx, `ALTER TABLE audit_events ADD COLUMN ip text;`);
}

export async function down(ctx: MigrationContext): Promise<void> {
	await sql(ctx, `ALTER TABLE audit_events DROP COLUMN ip;`);
}
