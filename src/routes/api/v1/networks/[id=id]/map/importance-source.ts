/**
 * The map's importance source: the recipe version the network uses. Its image is drawn by a
 * map-importance job (services/map-importance.ts), never by a request.
 */
import { getDb } from '$lib/server/db';
import { networkRecipeVersionId } from '$lib/server/repositories/recipes';
import type { ImportanceSource } from '$lib/server/services/map-data';

export function importanceSource(): ImportanceSource {
	return { versionId: (networkId) => networkRecipeVersionId(getDb(), networkId) };
}
