/**
 * `recipe-version`: saves a recipe version with its importance surface (computed once per
 * version, stored, cited by the version row); the result is {version} as the API returns it.
 * A refusal found while computing (layers that do not overlap, a layer gone) fails the job with
 * the reason and stores nothing. With `{operation: 'surface', versionId}` it computes and stores
 * the missing surface of an existing version instead; the result is {versionId}.
 */
import { recipeVersionImportance, saveRecipeVersion, type RecipeVersionView } from '../../services/importance';
import { RECIPE_VERSION, type RecipeVersionWork } from '../../services/recipe-versions';
import { JobFailure, type JobKind } from '../registry';
import { refusalsFail } from './refusals';

export const recipeVersionKind: JobKind<RecipeVersionWork, { version: RecipeVersionView } | { versionId: number }> = {
	kind: RECIPE_VERSION,
	limits: { timeMs: 10 * 60_000, memoryMb: 1024 },
	maxAttempts: 2,
	backoffMs: 1000,
	async handler({ payload, db, store, reportProgress }) {
		reportProgress({ step: 'computing the importance surface' });
		if ('operation' in payload) {
			return refusalsFail(async () => {
				if (!(await recipeVersionImportance(db, store, payload.networkId, payload.versionId))) throw new JobFailure('The recipe version no longer exists.');
				return { versionId: payload.versionId };
			});
		}
		return refusalsFail(async () => ({ version: await saveRecipeVersion(db, store, payload.networkId, payload.organisationId, payload.actorId, payload.input) }));
	}
};
