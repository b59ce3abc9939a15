/**
 * The route page's update forms as API bodies (shared by the server action and the offline queue, so
 * a re-sent update hashes the same under its Idempotency-Key), and which requests the service
 * worker keeps for the route offline.
 */
import { describe, expect, it } from 'vitest';
import { updateFromForm } from '../../../src/lib/field/update-form';
import { isFieldApi, isFieldPage, isRouteBackdrop } from '../../../src/lib/field/offline-routes';

const form = (fields: Record<string, string>) => {
	const f = new FormData();
	for (const [k, v] of Object.entries(fields)) f.set(k, v);
	return f;
};

describe('updateFromForm', () => {
	it('reads a Done form with a typed position, a decimal comma and a note', () => {
		// A decimal comma is how many phones' keyboards type decimals (common practice, no source).
		const u = updateFromForm(form({ taskId: '7', key: 'k-1', state: 'done', fromState: 'started', lat: ' -32,1746 ', lon: '143.4444', accuracyM: '', note: ' by the gate ' }));
		expect(u).toEqual({ taskId: 7, key: 'k-1', body: { state: 'done', fromState: 'started', position: { lon: 143.4444, lat: -32.1746 }, note: 'by the gate' } });
	});
	it('gives the same JSON for the same form, so a re-sent update is a replay, not a reuse of the key', () => {
		const f = { taskId: '3', key: 'k', state: 'blocked', fromState: 'open', reason: 'Gate locked' };
		expect(JSON.stringify(updateFromForm(form(f)).body)).toBe(JSON.stringify(updateFromForm(form({ ...f })).body));
		expect(updateFromForm(form(f)).body).toEqual({ state: 'blocked', fromState: 'open', reason: 'Gate locked' });
	});
	it('leaves out what was not filled in', () => {
		expect(updateFromForm(form({ taskId: '3', key: 'k', state: 'started', fromState: 'open', note: '  ' })).body).toEqual({ state: 'started', fromState: 'open' });
	});
});

describe('what the service worker keeps', () => {
	it('keeps the route page, its data and its print sheet, and nothing else of the app', () => {
		for (const p of ['/networks/12/field', '/networks/12/field/__data.json', '/networks/12/field/print']) expect(isFieldPage(p), p).toBe(true);
		for (const p of ['/networks/12/tasks', '/networks/12/field/x', '/networks/abc/field', '/admin/users']) expect(isFieldPage(p), p).toBe(false);
	});
	it('keeps the task list and the importance backdrop', () => {
		expect(isFieldApi('/api/v1/networks/4/tasks')).toBe(true);
		expect(isFieldApi('/api/v1/networks/4/tasks/9/updates')).toBe(false);
		expect(isRouteBackdrop('/api/v1/networks/4/map/importance.png')).toBe(true);
		expect(isRouteBackdrop('/api/v1/networks/4/layers/2/preview.png')).toBe(false);
	});
});
