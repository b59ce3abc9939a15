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
	aircraft: 'Aircraft or drone',
	drone: 'Drone',
	model: 'Model output',
	other: 'Other'
};

/** The platforms offered for new uploads ("aircraft" covers drones too). */
export const UPLOAD_PLATFORMS: LayerPlatform[] = ['satellite', 'aircraft', 'model', 'other'];

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
