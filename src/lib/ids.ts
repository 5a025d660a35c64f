/** Database ids are positive integers that fit a double exactly. */
const ID = /^[1-9][0-9]{0,14}$/;

/** The id in `text`, or null when it is missing or not an id ('1e999', '-1', 'abc'). */
export function parseId(text: string | null | undefined): number | null {
	return text != null && ID.test(text) ? Number(text) : null;
}
