import type { ZodError } from 'zod';

/** A failure a user can act on. Routes turn it into fail(…) on pages or the API error shape. */
export class ServiceError extends Error {
	constructor(
		public status: 400 | 403 | 404 | 409 | 413 | 422 | 429,
		public code: string,
		message: string,
		public field?: string,
		/** Every field's message, when more than one field is wrong. */
		public fields?: Record<string, string>
	) {
		super(message);
	}

	/** The one way a zod failure becomes a service error: the first issue's message, every field's message. */
	static fromZod(err: ZodError, message?: string): ServiceError {
		const fields = zodFields(err);
		const first = err.issues[0];
		return new ServiceError(400, 'invalid_input', message ?? first?.message ?? 'Some fields are not valid.', fieldKey(first?.path ?? []), fields);
	}
}

function fieldKey(path: readonly PropertyKey[]): string {
	return path.map(String).join('.') || '_';
}

/**
 * Zod issues as field messages: the dotted path of each issue (`name`, `definition.layers.0.weight`,
 * `_` for the whole input) to its first message. Forms and the JSON API both use this.
 */
export function zodFields(err: ZodError): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const issue of err.issues) fields[fieldKey(issue.path)] ??= issue.message;
	return fields;
}
