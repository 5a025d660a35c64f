import type { ParamMatcher } from '@sveltejs/kit';

/** Database ids are positive integers; anything else is a 404 before any query. */
export const match = ((param: string): boolean => /^[1-9][0-9]{0,17}$/.test(param)) satisfies ParamMatcher;
