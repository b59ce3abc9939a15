/**
 * The deployment's basemap under a Leaflet map (EPSG:3857): the XYZ tiles and their attribution.
 * Only called when the deployment set one (`page.data.basemap`); otherwise no tile is asked for.
 */
import type * as Leaflet from 'leaflet';
import type { BasemapView } from '$lib/map/web-map';

export type { BasemapView };

/** Zoom beyond the tile server's highest level enlarges its tiles (a sensor site needs a close look). */
export const WEB_MAP_MAX_ZOOM = 21;

/** The deployment's basemap from the page data (the root layout sends it to every page), or null when off. */
export function pageBasemap(data: Record<string, unknown>): BasemapView | null {
	return (data.basemap as BasemapView | null | undefined) ?? null;
}

/** Plain text as HTML (Leaflet's attribution control takes HTML). */
export function attributionHtml(text: string): string {
	return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] as string);
}

/** Adds the tiles (in Leaflet's tile pane, under every overlay) and the attribution, bottom left. */
export function addBasemap(L: typeof Leaflet, map: Leaflet.Map, basemap: BasemapView): Leaflet.TileLayer {
	L.control.attribution({ prefix: false, position: 'bottomleft' }).addTo(map);
	return L.tileLayer(basemap.url, {
		attribution: attributionHtml(basemap.attribution),
		maxNativeZoom: basemap.maxZoom,
		maxZoom: WEB_MAP_MAX_ZOOM,
		className: 'cf-basemap'
	}).addTo(map);
}
