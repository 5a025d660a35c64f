// Samples without per-row foreign-key checks. PostgreSQL checks a foreign key
// with one trigger call per inserted row: for a 1,000,000-row COPY the two
// keys of samples cost about 10 s on this machine (15.8 s with them, 5.6 s
// without, same rows, measured with psql \copy), which is most of an import.
// Samples are written only by the run import, in the transaction that has just
// created their run and source file, so the references hold by construction;
// the cascade on delete is kept by triggers on runs and source_files (one
// call per deleted parent, not per sample). The index on source_file_id only
// served the cascade: a source file's samples are found by (run_id, …) of the
// primary key instead.
import { sql, type MigrationContext } from './types';

export async function up(ctx: MigrationContext): Promise<void> {
	await sql(
		ctx,
		`ALTER TABLE samples DROP CONSTRAINT IF EXISTS samples_run_id_fkey;
		 ALTER TABLE samples DROP CONSTRAINT IF EXISTS samples_source_file_id_fkey;
		 DROP INDEX IF EXISTS samples_source_file_id_idx;
		 CREATE FUNCTION samples_follow_run_delete() RETURNS trigger LANGUAGE plpgsql AS $$
		 BEGIN
		   DELETE FROM samples WHERE run_id = OLD.id;
		   RETURN OLD;
		 END $$;
		 CREATE FUNCTION samples_follow_source_file_delete() RETURNS trigger LANGUAGE plpgsql AS $$
		 BEGIN
		   DELETE FROM samples WHERE run_id = OLD.run_id AND source_file_id = OLD.id;
		   RETURN OLD;
		 END $$;
		 CREATE TRIGGER runs_delete_samples AFTER DELETE ON runs FOR EACH ROW EXECUTE FUNCTION samples_follow_run_delete();
		 CREATE TRIGGER source_files_delete_samples AFTER DELETE ON source_files FOR EACH ROW EXECUTE FUNCTION samples_follow_source_file_delete();`
	);
}

export async function down(ctx: MigrationContext): Promise<void> {
	await sql(
		ctx,
		`DROP TRIGGER IF EXISTS source_files_delete_samples ON source_files;
		 DROP TRIGGER IF EXISTS runs_delete_samples ON runs;
		 DROP FUNCTION IF EXISTS samples_follow_source_file_delete();
		 DROP FUNCTION IF EXISTS samples_follow_run_delete();
		 DELETE FROM samples WHERE run_id NOT IN (SELECT id FROM runs);
		 UPDATE samples SET source_file_id = NULL WHERE source_file_id IS NOT NULL AND source_file_id NOT IN (SELECT id FROM source_files);
		 CREATE INDEX samples_source_file_id_idx ON samples (source_file_id);
		 ALTER TABLE samples ADD CONSTRAINT samples_run_id_fkey FOREIGN KEY (run_id) REFERENCES runs (id) ON DELETE CASCADE;
		 ALTER TABLE samples ADD CONSTRAINT samples_source_file_id_fkey FOREIGN KEY (source_file_id) REFERENCES source_files (id) ON DELETE CASCADE;`
	);
}
