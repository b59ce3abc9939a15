/**
 * Saving a recipe version as a job: the importance surface of each version is computed once, by a
 * `recipe-version` job (../jobs/kinds/recipe-version.ts) that calls saveRecipeVersion, which stores
 * the surface and the version together (or neither). The request does the cheap checks (input,
 * layers ready, recipe and name) so that most mistakes are answered at once, and returns the job.
 */
import type { Knex } from 'knex';
import { enqueueJob, jobView, type JobView } from '../jobs/queue';
import { findRecipe, findRecipeByName } from '../repositories/recipes';
import { ServiceError } from './errors';
import { checkRecipe, saveVersionInput, type SaveVersionInput } from './importance';

export const RECIPE_VERSION = 'recipe-version';

export interface RecipeVersionWork {
	networkId: number;
	organisationId: number;
	actorId: number;
	input: SaveVersionInput;
}

export async function queueRecipeVersion(db: Knex, networkId: number, organisationId: number, actorId: number, input: SaveVersionInput): Promise<JobView> {
	const parsed = saveVersionInput.safeParse(input);
	if (!parsed.success) throw ServiceError.fromZod(parsed.error);
	const { recipeId, name } = parsed.data;
	await checkRecipe(db, networkId, parsed.data.definition);
	if (recipeId !== undefined) {
		if (!(await findRecipe(db, networkId, recipeId))) throw new ServiceError(404, 'not_found', 'No such recipe.', 'recipeId');
	} else if (await findRecipeByName(db, networkId, name!)) {
		throw new ServiceError(409, 'name_taken', `A recipe named "${name}" already exists; save a new version of it instead.`, 'name');
	}
	const payload: RecipeVersionWork = { networkId, organisationId, actorId, input };
	return jobView(await enqueueJob(db, { kind: RECIPE_VERSION, payload, networkId, createdBy: actorId, priority: 10 }));
}
