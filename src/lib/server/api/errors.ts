/** The one error shape of the JSON API: { "error": { "code", "message", "fields"? } }. */
import { json, isHttpError, isRedirect, type RequestEvent, type RequestHandler } from '@sveltejs/kit';
import type { ZodError } from 'zod';
import { ServiceError } from '../services/errors';

export class ApiError extends Error {
	constructor(
		public status: number,
		public code: string,
		message: string,
		public fields?: Record<string, string>
	) {
		super(message);
	}
}

export function apiErrorBody(code: string, message: string, fields?: Record<string, string>) {
	return { error: fields ? { code, message, fields } : { code, message } };
}

export function zodFields(err: ZodError): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const issue of err.issues) {
		const key = issue.path.join('.') || '_';
		fields[key] ??= issue.message;
	}
	return fields;
}

/** Wraps an endpoint so every failure leaves in the API error shape, never as a stack trace. */
export function apiHandler(fn: (event: RequestEvent) => Promise<Response>): RequestHandler {
	return async (event) => {
		try {
			return await fn(event);
		} catch (err) {
			if (err instanceof ApiError) return json(apiErrorBody(err.code, err.message, err.fields), { status: err.status });
			if (err instanceof ServiceError) return json(apiErrorBody(err.code, err.message, err.field ? { [err.field]: err.message } : undefined), { status: err.status });
			if (isHttpError(err)) return json(apiErrorBody(err.status === 404 ? 'not_found' : 'http_error', err.body.message), { status: err.status });
			if (isRedirect(err)) throw err;
			console.error(err);
			return json(apiErrorBody('internal', 'Something went wrong on the server.'), { status: 500 });
		}
	};
}

/** Reads and validates a JSON body. */
export async function readJson<T>(event: RequestEvent, schema: { safeParse(v: unknown): { success: true; data: T } | { success: false; error: ZodError } }): Promise<T> {
	let body: unknown;
	try {
		body = await event.request.json();
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
	const parsed = schema.safeParse(body);
	if (!parsed.success) throw new ApiError(400, 'invalid_input', 'Some fields are not valid.', zodFields(parsed.error));
	return parsed.data;
}
