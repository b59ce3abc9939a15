/**
 * `recipe-version`: saves a recipe version with its importance surface (computed once per
 * version in a pool thread, stored, cited by the version row); the result is {version} as the API
 * returns it. A refusal found while computing (layers that do not overlap, a layer gone) fails the
 * job with the reason and stores nothing. With `{operation: 'surface', versionId}` it computes and
 * stores the missing surface of an existing version instead; the result is {versionId}.
 * Finished step: the version's importance map image is queued (map-importance), so that no map
 * request draws it.
 */
import { ensureVersionSurface, saveRecipeVersion, type RecipeVersionView } from '../../services/importance';
import { queueMapImportanceOfVersion } from '../../services/map-importance';
import { RECIPE_VERSION, type RecipeVersionWork } from '../../services/recipe-versions';
import { JobFailure, type JobKind } from '../registry';
import { refusalsFail } from './refusals';
import { IMPORTANCE_MEMORY_MB, threadSurfaceRunner } from './thread-work';

type Result = { version: RecipeVersionView } | { versionId: number };

export const recipeVersionKind: JobKind<RecipeVersionWork, Result> = {
	kind: RECIPE_VERSION,
	limits: { timeMs: 10 * 60_000, memoryMb: IMPORTANCE_MEMORY_MB },
	maxAttempts: 2,
	backoffMs: 1000,
	async handler(ctx) {
		const { payload, db, store, reportProgress } = ctx;
		reportProgress({ step: 'computing the importance surface' });
		const runner = threadSurfaceRunner(ctx);
		if ('operation' in payload) {
			return refusalsFail(async () => {
				if (!(await ensureVersionSurface(db, store, payload.networkId, payload.versionId, runner))) throw new JobFailure('The recipe version no longer exists.');
				return { versionId: payload.versionId };
			});
		}
		return refusalsFail(async () => ({ version: await saveRecipeVersion(db, store, payload.networkId, payload.organisationId, payload.actorId, payload.input, runner) }));
	},
	async onFinished(trx, job, result) {
		const versionId = 'version' in result ? result.version.id : result.versionId;
		await queueMapImportanceOfVersion(trx, (job.payload as RecipeVersionWork).networkId, versionId);
	}
};
