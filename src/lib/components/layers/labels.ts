/** Words for layer kinds and platforms, shared by the Layers and Importance pages. */
import type { LayerKind, LayerPlatform, RecipeTransform } from '$lib/api/client';

/** The editor's state of one recipe step. */
export interface StepState {
	used: boolean;
	transform: RecipeTransform;
	weight: number;
	lo: number;
	hi: number;
	distanceM: number;
}

export const KIND_LABELS: Record<LayerKind, string> = {
	soil_moisture: 'Soil moisture',
	vegetation_index: 'Vegetation index',
	elevation: 'Elevation',
	other: 'Other'
};

export const PLATFORM_LABELS: Record<LayerPlatform, string> = {
	satellite: 'Satellite',
	aircraft: 'Crewed aircraft',
	drone: 'Drone',
	model: 'Model output',
	other: 'Other'
};

/** The platforms offered for new uploads. */
export const UPLOAD_PLATFORMS: LayerPlatform[] = ['satellite', 'aircraft', 'drone', 'model', 'other'];

/**
 * The transforms offered in the recipe editor. "identity" and "minmax" compute the same thing (every
 * layer is scaled to 0..1 by its minimum and maximum before weighting), so only one is offered;
 * versions saved with "minmax" keep working and read the same.
 */
export const TRANSFORM_CHOICES: RecipeTransform[] = ['identity', 'invert', 'band', 'variability'];

export const TRANSFORM_LABELS: Record<RecipeTransform, string> = {
	identity: 'Scaled 0–1 (high values important)',
	invert: 'Inverted (low values important, e.g. dry)',
	minmax: 'Scaled 0–1 (high values important)',
	band: 'Within a range (between two thresholds)',
	variability: 'Variability: standard deviation within a window'
};

/** A recipe step in a few words, for the list of versions. */
export function describeTransform(transform: RecipeTransform, params?: { lo?: number; hi?: number; distanceM?: number }): string {
	switch (transform) {
		case 'identity':
		case 'minmax':
			return 'scaled 0–1';
		case 'invert':
			return 'inverted';
		case 'band':
			return `range ${params?.lo}–${params?.hi}`;
		case 'variability':
			return `standard deviation within ±${params?.distanceM} m`;
	}
}

export function formatBytes(n: number): string {
	if (n >= 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MB`;
	if (n >= 1024) return `${(n / 1024).toFixed(1)} kB`;
	return `${n} bytes`;
}

/** Four significant digits, for statistics. */
export function fmt(v: number | null | undefined): string {
	if (v === null || v === undefined || !Number.isFinite(v)) return '—';
	return Number(v.toPrecision(4)).toString();
}
