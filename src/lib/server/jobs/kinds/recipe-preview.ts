/**
 * `recipe-preview`: the importance map of an unsaved recipe (payload {networkId, definition}),
 * computed by the importance service in a pool thread (heap limit JOBS_IMPORTANCE_MEMORY_MB); the
 * result is the API's `{preview}` (PNG as base64). Previews run at a higher priority than
 * placements: an analyst is waiting for them.
 */
import { previewRecipe } from '../../services/importance';
import { RECIPE_PREVIEW, recipePreviewView } from '../../services/recipe-previews';
import type { JobKind } from '../registry';
import { refusalsFail } from './refusals';
import { IMPORTANCE_MEMORY_MB, threadSurfaceRunner } from './thread-work';

export const recipePreviewKind: JobKind<{ networkId: number; definition: unknown }, { preview: ReturnType<typeof recipePreviewView> }> = {
	kind: RECIPE_PREVIEW,
	limits: { timeMs: 5 * 60_000, memoryMb: IMPORTANCE_MEMORY_MB },
	maxAttempts: 2,
	backoffMs: 1000,
	async handler(ctx) {
		const { payload, db, store, reportProgress } = ctx;
		reportProgress({ step: 'computing' });
		return refusalsFail(async () => ({ preview: recipePreviewView(await previewRecipe(db, store, payload.networkId, payload.definition, threadSurfaceRunner(ctx))) }));
	}
};
