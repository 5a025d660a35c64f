// What the import learnt about a source file's layout (format, header row,
// headers, unit row, preamble), the number of stored samples, and raw bytes
// kept uncompressed: the files are stored once and streamed back whole, and
// skipping TOAST compression keeps a 100 MB upload's COPY fast.
import { sql, type MigrationContext } from './types';

export async function up(ctx: MigrationContext): Promise<void> {
	await sql(
		ctx,
		`ALTER TABLE source_files ADD COLUMN layout jsonb;
		 ALTER TABLE source_files ADD COLUMN row_count integer;
		 ALTER TABLE source_files ALTER COLUMN bytes SET STORAGE EXTERNAL;`
	);
}

export async function down(ctx: MigrationContext): Promise<void> {
	await sql(
		ctx,
		`ALTER TABLE source_files ALTER COLUMN bytes SET STORAGE EXTENDED;
		 ALTER TABLE source_files DROP COLUMN row_count;
		 ALTER TABLE source_files DROP COLUMN layout;`
	);
}
