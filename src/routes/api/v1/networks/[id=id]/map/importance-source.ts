/** The map's importance source: the recipe version the network uses, and its surface from the importance service. */
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { networkRecipeVersionId } from '$lib/server/repositories/recipes';
import type { ImportanceSource } from '$lib/server/services/map-data';
import { networkImportance } from '$lib/server/services/importance';

export function importanceSource(): ImportanceSource {
	return {
		versionId: (networkId) => networkRecipeVersionId(getDb(), networkId),
		surface: async (networkId) => {
			const s = await networkImportance(getDb(), getObjectStore(), networkId);
			return s ? { grid: s.grid, data: s.band.data } : null;
		}
	};
}
