/** A failure a user can act on. Routes turn it into fail(…) on pages or the API error shape. */
export class ServiceError extends Error {
	constructor(
		public status: 400 | 403 | 404 | 409 | 413 | 415 | 422 | 429,
		public code: string,
		message: string,
		public field?: string
	) {
		super(message);
	}
}
