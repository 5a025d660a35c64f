// Our ids are bigint identity columns, and COUNT(*) is bigint too. node-postgres
// returns int8 as a string by default (it cannot know the value fits a JS number);
// ours stay far below 2^53, so parse them as numbers and fail loudly otherwise.
import pg from 'pg';

const INT8_OID = 20;

pg.types.setTypeParser(INT8_OID, (text: string) => {
	const n = Number(text);
	if (!Number.isSafeInteger(n)) throw new RangeError(`bigint ${text} exceeds Number.MAX_SAFE_INTEGER`);
	return n;
});
