import { describe, expect, it } from 'vitest';
import { readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { ROUTE_ACCESS } from '../../../src/lib/server/auth/route-access';

const routesDir = path.resolve(import.meta.dirname, '../../../src/routes');

/** SvelteKit route ids of every folder holding a +page or +server file. */
function routeIds(dir = routesDir): string[] {
	const ids: string[] = [];
	const files = readdirSync(dir);
	if (files.some((f) => /^\+(page|server)(\.server)?\.(svelte|ts|js)$/.test(f)) && dir !== routesDir) ids.push('/' + path.relative(routesDir, dir).split(path.sep).join('/'));
	if (dir === routesDir && files.some((f) => /^\+page/.test(f))) ids.push('/');
	for (const f of files) {
		const p = path.join(dir, f);
		if (statSync(p).isDirectory()) ids.push(...routeIds(p));
	}
	return ids;
}

describe('route access table (deny by default)', () => {
	it('lists every route in src/routes, and nothing that does not exist', () => {
		const ids = routeIds().sort();
		expect(ids.length).toBeGreaterThan(5);
		expect(Object.keys(ROUTE_ACCESS).sort()).toEqual(ids);
	});
});
