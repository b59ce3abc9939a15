import { describe, expect, it } from 'vitest';
import { error, type RequestEvent } from '@sveltejs/kit';
import { z } from 'zod';
import { apiHandler, ApiError } from '../../../src/lib/server/api/errors';
import { ServiceError, zodFields } from '../../../src/lib/server/services/errors';

const event = {} as RequestEvent;

async function answer(thrown: unknown): Promise<{ status: number; body: unknown }> {
	const res = await apiHandler(async () => {
		throw thrown;
	})(event);
	return { status: res.status, body: await res.json() };
}

// The API's error shape is ours: { error: { code, message, fields? } } (DEVELOPERS.md).
describe('apiHandler maps every failure once', () => {
	it('a ServiceError keeps its status and code, its field becomes fields', async () => {
		expect(await answer(new ServiceError(409, 'stale', 'Reload first.', 'version'))).toEqual({ status: 409, body: { error: { code: 'stale', message: 'Reload first.', fields: { version: 'Reload first.' } } } });
	});

	it('a ServiceError without a field has no fields', async () => {
		expect(await answer(new ServiceError(422, 'map_unavailable', 'No map.'))).toEqual({ status: 422, body: { error: { code: 'map_unavailable', message: 'No map.' } } });
	});

	it('an ApiError and SvelteKit error() keep their status; anything else is a 500 without details', async () => {
		expect((await answer(new ApiError(400, 'invalid_input', 'Bad.'))).status).toBe(400);
		let httpError: unknown;
		try {
			error(404, 'No such thing.');
		} catch (e) {
			httpError = e;
		}
		expect(await answer(httpError)).toEqual({ status: 404, body: { error: { code: 'not_found', message: 'No such thing.' } } });
		const quiet = console.error;
		console.error = () => undefined;
		try {
			expect(await answer(new RangeError('secret detail'))).toEqual({ status: 500, body: { error: { code: 'internal', message: 'Something went wrong on the server.' } } });
		} finally {
			console.error = quiet;
		}
	});
});

describe('zod issues become field messages one way', () => {
	const schema = z.object({ name: z.string().min(1, 'Give it a name.'), layers: z.array(z.object({ weight: z.number({ error: 'weight must be a number' }) })) });

	it('zodFields keys each issue by its dotted path, first message wins', () => {
		const r = schema.safeParse({ name: '', layers: [{ weight: 'x' }] });
		expect(r.success).toBe(false);
		if (!r.success) expect(zodFields(r.error)).toEqual({ name: 'Give it a name.', 'layers.0.weight': 'weight must be a number' });
	});

	it('ServiceError.fromZod is a 400 naming the first field and carrying them all', () => {
		const r = schema.safeParse({ name: '', layers: [{ weight: 'x' }] });
		if (r.success) throw new Error('expected a failure');
		const e = ServiceError.fromZod(r.error);
		expect([e.status, e.code, e.message, e.field]).toEqual([400, 'invalid_input', 'Give it a name.', 'name']);
		expect(e.fields).toEqual(zodFields(r.error));
	});
});
