// Every change that can end or alter someone's access — a person's role,
// activity, name or address; an API token's revocation, expiry or owner — is
// announced on the channel `spanline_auth` with the person's id. Each app
// process listens and drops what it remembers about that person at once
// (auth/identity-cache.ts), whichever process or tool made the change, so the
// per-request identity look-up can be kept in memory without a revoked token
// or a deactivated person staying in.
import { sql, type MigrationContext } from './types';

export async function up(ctx: MigrationContext): Promise<void> {
	await sql(
		ctx,
		`CREATE FUNCTION spanline_auth_changed() RETURNS trigger LANGUAGE plpgsql AS $$
		 BEGIN
		   IF TG_TABLE_NAME = 'users' THEN
		     PERFORM pg_notify('spanline_auth', OLD.id::text);
		   ELSE
		     PERFORM pg_notify('spanline_auth', OLD.user_id::text);
		     IF TG_OP = 'UPDATE' AND NEW.user_id IS DISTINCT FROM OLD.user_id THEN
		       PERFORM pg_notify('spanline_auth', NEW.user_id::text);
		     END IF;
		   END IF;
		   RETURN NULL;
		 END $$;
		 CREATE TRIGGER users_auth_changed AFTER UPDATE OF role, active, name, email OR DELETE ON users
		   FOR EACH ROW EXECUTE FUNCTION spanline_auth_changed();
		 CREATE TRIGGER api_tokens_auth_changed AFTER UPDATE OF revoked_at, expires_at, user_id, token_hash OR DELETE ON api_tokens
		   FOR EACH ROW EXECUTE FUNCTION spanline_auth_changed();`
	);
}

export async function down(ctx: MigrationContext): Promise<void> {
	await sql(
		ctx,
		`DROP TRIGGER IF EXISTS api_tokens_auth_changed ON api_tokens;
		 DROP TRIGGER IF EXISTS users_auth_changed ON users;
		 DROP FUNCTION IF EXISTS spanline_auth_changed();`
	);
}
