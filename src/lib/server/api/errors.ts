/** The one error shape of the JSON API: { "error": { "code", "message", "fields"? } }. */
import { json, isHttpError, isRedirect, type RequestEvent } from '@sveltejs/kit';
import type { ZodError } from 'zod';
import { ApiClientError } from '../../api/client';
import { ServiceError, zodFields } from '../services/errors';

/** An error the endpoint answers with: the same shape the typed client raises on the other side. */
export class ApiError extends ApiClientError {}

export function apiErrorBody(code: string, message: string, fields?: Record<string, string>) {
	return { error: fields ? { code, message, fields } : { code, message } };
}

/** A service's failure in the API's terms: its field (or fields) become `fields`. */
function fromServiceError(err: ServiceError): ApiError {
	const fields = err.fields ?? (err.field ? { [err.field]: err.message } : undefined);
	return new ApiError(err.status, err.code, err.message, fields);
}

/**
 * Wraps an endpoint so every failure leaves in the API error shape, never as a stack trace:
 * ApiError and ServiceError with their status, SvelteKit's error() with its own, anything else a 500.
 * The route's own event type is kept, so `event.params` stays typed.
 */
export function apiHandler<E extends RequestEvent>(fn: (event: E) => Promise<Response>): (event: E) => Promise<Response> {
	return async (event) => {
		try {
			return await fn(event);
		} catch (caught) {
			const err = caught instanceof ServiceError ? fromServiceError(caught) : caught;
			if (err instanceof ApiError) return json(apiErrorBody(err.code, err.message, err.fields), { status: err.status });
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
