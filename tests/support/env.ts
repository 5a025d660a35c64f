/** Where the built server of this test run listens (set by scripts/test.mjs). */
export function baseUrl(): string {
	const url = process.env.SPANLINE_TEST_URL;
	if (!url) throw new Error('SPANLINE_TEST_URL is not set: run the suite with `npm test`.');
	return url;
}
