import type { ParamMatcher } from '@sveltejs/kit';
import { parseId } from '$lib/ids';

/** Database ids are positive integers; anything else is a 404 before any query. */
export const match = ((param: string): boolean => parseId(param) !== null) satisfies ParamMatcher;
