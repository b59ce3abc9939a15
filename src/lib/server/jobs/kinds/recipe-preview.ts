/**
 * `recipe-preview`: the importance map of an unsaved recipe (payload {networkId, definition}),
 * computed by the importance service; the result is the API's `{preview}` (PNG as base64).
 * Previews run at a higher priority than placements: an analyst is waiting for them.
 */
import { previewRecipe } from '../../services/importance';
import { RECIPE_PREVIEW, recipePreviewView } from '../../services/recipe-previews';
import { ServiceError } from '../../services/errors';
import { JobFailure, type JobKind } from '../registry';

export const recipePreviewKind: JobKind<{ networkId: number; definition: unknown }, { preview: ReturnType<typeof recipePreviewView> }> = {
	kind: RECIPE_PREVIEW,
	limits: { timeMs: 5 * 60_000, memoryMb: 1024 },
	maxAttempts: 2,
	backoffMs: 1000,
	async handler({ payload, db, store, reportProgress }) {
		reportProgress({ step: 'computing' });
		try {
			return { preview: recipePreviewView(await previewRecipe(db, store, payload.networkId, payload.definition)) };
		} catch (e) {
			if (e instanceof ServiceError) throw new JobFailure(e.message);
			throw e;
		}
	}
};
