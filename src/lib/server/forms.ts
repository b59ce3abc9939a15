/** Helpers for form actions: read validated fields, and turn service errors into fail(). */
import { fail, type ActionFailure } from '@sveltejs/kit';
import type { ZodType } from 'zod';
import { ServiceError, zodFields } from './services/errors';

export type FormErrors = Record<string, string>;

export function formFields(data: FormData, names: string[]): Record<string, string> {
	const out: Record<string, string> = {};
	for (const n of names) {
		const v = data.get(n);
		if (typeof v === 'string') out[n] = v;
	}
	return out;
}

/** Validates form fields; on failure returns fail(400) with per-field messages and the safe values. */
export function parseForm<T>(schema: ZodType<T>, values: Record<string, string>, echo: string[] = []): { ok: true; data: T } | { ok: false; failure: ActionFailure<{ errors: FormErrors; values: Record<string, string> }> } {
	const r = schema.safeParse(values);
	if (r.success) return { ok: true, data: r.data };
	return { ok: false, failure: fail(400, { errors: zodFields(r.error), values: Object.fromEntries(echo.filter((k) => k in values).map((k) => [k, values[k]])) }) };
}

/** Maps a ServiceError to fail(); rethrows anything else (handled by handleError). */
export function serviceFailure(err: unknown, values: Record<string, string> = {}) {
	if (err instanceof ServiceError) {
		return fail(err.status, { errors: err.fields ?? { [err.field ?? '_']: err.message }, values });
	}
	throw err;
}
