/**
 * The job kinds Cairnfield runs. A worker process calls registerBuiltInJobKinds() before it starts;
 * the app calls it too, so that cancelling a queued job runs its kind's failed hooks.
 */
import { registerJobKind } from '../registry';
import { layerProcessingKind } from './layer-processing';
import { placementKind } from './placement';
import { recipePreviewKind } from './recipe-preview';
import { zonesKind } from './zones';
import { recipeVersionKind } from './recipe-version';
import { proposalRunKind } from './proposal-run';
import { mapImportanceKind } from './map-importance';

export { LAYER_PROCESSING, type LayerProcessingPayload } from './layer-processing';
export { PLACEMENT, type PlacementPayload } from './placement';
export { RECIPE_PREVIEW } from '../../services/recipe-previews';
export { ZONE_WORK } from '../../services/zone-jobs';
export { RECIPE_VERSION } from '../../services/recipe-versions';
export { MAP_IMPORTANCE } from '../../services/map-importance';

export function registerBuiltInJobKinds(): void {
	registerJobKind(layerProcessingKind);
	registerJobKind(placementKind);
	registerJobKind(recipePreviewKind);
	registerJobKind(zonesKind);
	registerJobKind(recipeVersionKind);
	registerJobKind(proposalRunKind);
	registerJobKind(mapImportanceKind);
}
