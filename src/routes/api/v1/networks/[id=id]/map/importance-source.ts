/**
 * The map's importance source: the recipe version the network uses, and its surface from the
 * importance service. A surface that is not stored is never computed here: its job is queued, and
 * the source gives null (the map without importance for now) or, with `{ pending: 'throw' }`,
 * ImportancePending (409 importance_pending: "being computed").
 */
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { networkRecipeVersionId } from '$lib/server/repositories/recipes';
import type { ImportanceSource } from '$lib/server/services/map-data';
import { ImportancePending, networkImportance } from '$lib/server/services/importance';

export function importanceSource(opts: { pending?: 'null' | 'throw' } = {}): ImportanceSource {
	return {
		versionId: (networkId) => networkRecipeVersionId(getDb(), networkId),
		surface: async (networkId) => {
			try {
				const s = await networkImportance(getDb(), getObjectStore(), networkId, { compute: false });
				return s ? { grid: s.grid, data: s.band.data } : null;
			} catch (e) {
				if (e instanceof ImportancePending && opts.pending !== 'throw') return null;
				throw e;
			}
		}
	};
}
