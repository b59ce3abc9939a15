/**
 * Recipe previews as jobs: the request checks the recipe (cheap) and queues a `recipe-preview`
 * job; the job computes the importance map (../jobs/kinds/recipe-preview.ts). The same recipe asked
 * again is the same job (idempotency key over the network and the definition), so an analyst who
 * presses Preview repeatedly queues the work once.
 */
import { createHash } from 'node:crypto';
import type { Knex } from 'knex';
import { enqueueJob, findJobByKey, jobView, type JobView } from '../jobs/queue';
import { checkRecipe, type RecipePreview } from './importance';

export const RECIPE_PREVIEW = 'recipe-preview';

/** The preview as the API returns it (`{preview}`): the PNG as base64. */
export function recipePreviewView(p: RecipePreview) {
	return { png: p.png.toString('base64'), width: p.width, height: p.height, grid: p.grid, validCount: p.validCount, min: p.min, max: p.max, mean: p.mean, legend: p.legend };
}

export async function queueRecipePreview(db: Knex, networkId: number, actorId: number, definition: unknown): Promise<JobView> {
	const recipe = await checkRecipe(db, networkId, definition);
	const digest = createHash('sha256').update(JSON.stringify(recipe)).digest('hex').slice(0, 32);
	let key = `${RECIPE_PREVIEW}:${networkId}:${digest}`;
	const earlier = await findJobByKey(db, key);
	// A preview that failed or was cancelled may be asked for again (the layers may be ready now).
	if (earlier && (earlier.state === 'failed' || earlier.state === 'cancelled')) key = `${key}:${Date.now()}`;
	const job = await enqueueJob(db, { kind: RECIPE_PREVIEW, payload: { networkId, definition: recipe }, networkId, createdBy: actorId, idempotencyKey: key, priority: 10 });
	return jobView(job);
}
