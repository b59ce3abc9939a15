import type { ParamMatcher } from '@sveltejs/kit';

/** A positive integer id without leading zeros. */
export const match: ParamMatcher = (param) => /^[1-9][0-9]{0,9}$/.test(param);
