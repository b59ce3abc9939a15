/**
 * The basemap: an XYZ tile layer that the deployment may set under the web maps. Off by default,
 * because the default setup fetches nothing from outside; with it unset no page asks any other
 * host for anything. The settings are read once, at server start (hooks' `init`), and a malformed
 * one stops the server with a message that says what to fix.
 *
 *   BASEMAP_URL           tile URL template, e.g. https://tiles.example.org/{z}/{x}/{y}.png
 *                         ({z}, {x} and {y} each once, in the path or query; http or https)
 *   BASEMAP_ATTRIBUTION   the credit the tiles' provider requires, as plain text (required with a URL)
 *   BASEMAP_MAX_ZOOM      the highest zoom level the tile server has (0–22, default 19); the map
 *                         enlarges those tiles beyond it
 *
 * The page CSP then allows images from exactly the template's origin (`withImageSource`).
 */

import type { BasemapView } from '../../map/web-map';

export type { BasemapView };

export interface BasemapSettings extends BasemapView {
	/** scheme://host[:port] of the tiles: the one origin added to the page CSP's img-src. */
	origin: string;
}

export class BasemapSettingError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'BasemapSettingError';
	}
}

export const DEFAULT_BASEMAP_MAX_ZOOM = 19;
const MAX_ATTRIBUTION = 300;
const PLACEHOLDERS = ['{z}', '{x}', '{y}'] as const;

type Env = Record<string, string | undefined>;

/**
 * The basemap settings from the environment, or null when BASEMAP_URL is unset or empty. Throws
 * BasemapSettingError for a malformed setting: a URL that is not http(s), carries a user name or
 * password, lacks one of {z}/{x}/{y} (or repeats one), has any other {placeholder} (such as {s},
 * whose several hosts one CSP origin could not name), or puts a placeholder in the host; a missing
 * or over-long attribution; a max zoom that is not a whole number from 0 to 22; an attribution or
 * max zoom without a URL.
 */
export function parseBasemapSettings(env: Env = process.env): BasemapSettings | null {
	const template = env.BASEMAP_URL?.trim() ?? '';
	const attribution = (env.BASEMAP_ATTRIBUTION ?? '').replace(/\s+/g, ' ').trim();
	const zoomText = env.BASEMAP_MAX_ZOOM?.trim() ?? '';
	if (template === '') {
		if (attribution !== '' || zoomText !== '') throw new BasemapSettingError('BASEMAP_ATTRIBUTION or BASEMAP_MAX_ZOOM is set but BASEMAP_URL is not: set the tile URL too, or unset them (the maps then have no basemap).');
		return null;
	}
	const bad = (why: string) => new BasemapSettingError(`BASEMAP_URL ${JSON.stringify(template)} ${why}. Expected an XYZ tile template such as https://tiles.example.org/{z}/{x}/{y}.png.`);
	for (const p of PLACEHOLDERS) {
		const count = template.split(p).length - 1;
		if (count === 0) throw bad(`has no ${p}`);
		if (count > 1) throw bad(`has ${p} more than once`);
	}
	const other = template.replace(/\{[zxy]\}/g, '').match(/\{[^}]*\}?/);
	if (other) throw bad(`has the placeholder ${other[0]}, which is not supported (only {z}, {x} and {y}; one tile host)`);
	if (/[\s<>"'`\\]/.test(template)) throw bad('contains spaces, quotes, angle brackets or backslashes');
	let url: URL;
	try {
		url = new URL(template.replace(/\{([zxy])\}/g, '0'));
	} catch {
		throw bad('is not an absolute URL');
	}
	if (url.protocol !== 'https:' && url.protocol !== 'http:') throw bad(`uses ${url.protocol} (only https: or http:)`);
	if (url.username || url.password) throw bad('carries a user name or password');
	// The placeholders belong to the path or the query: the origin must be the template's own start.
	if (!template.toLowerCase().startsWith(url.origin.toLowerCase() + '/') && !template.toLowerCase().startsWith(url.origin.toLowerCase() + '?')) throw bad('has a placeholder or an unusual form in its host');
	if (attribution === '') throw new BasemapSettingError('BASEMAP_URL is set but BASEMAP_ATTRIBUTION is not: set the credit the tiles’ provider requires (e.g. “© OpenStreetMap contributors”).');
	if (attribution.length > MAX_ATTRIBUTION) throw new BasemapSettingError(`BASEMAP_ATTRIBUTION is ${attribution.length} characters long; at most ${MAX_ATTRIBUTION}.`);
	let maxZoom = DEFAULT_BASEMAP_MAX_ZOOM;
	if (zoomText !== '') {
		maxZoom = Number(zoomText);
		if (!/^\d+$/.test(zoomText) || maxZoom > 22) throw new BasemapSettingError(`BASEMAP_MAX_ZOOM ${JSON.stringify(zoomText)} must be a whole number from 0 to 22.`);
	}
	return { url: template, attribution, maxZoom, origin: url.origin };
}

let settings: BasemapSettings | null | undefined;

/** Reads and checks the settings; called once at server start, so a bad one stops the server there. */
export function loadBasemapSettings(env: Env = process.env): BasemapSettings | null {
	settings = parseBasemapSettings(env);
	return settings;
}

/** The deployment's basemap (read on first use when the start did not read it), or null when off. */
export function basemapSettings(): BasemapSettings | null {
	if (settings === undefined) settings = parseBasemapSettings();
	return settings;
}

/** What pages send to the browser: the template, the attribution and the max zoom; null when off. */
export function basemapView(): BasemapView | null {
	const s = basemapSettings();
	return s ? { url: s.url, attribution: s.attribution, maxZoom: s.maxZoom } : null;
}

/**
 * A Content-Security-Policy with `origin` added to its img-src (made from default-src when the
 * policy has no img-src); the policy unchanged when `origin` is null or already listed. Only
 * img-src changes: tiles are images, nothing else may come from the tile host.
 */
export function withImageSource(csp: string, origin: string | null): string {
	if (!origin) return csp;
	const directives = csp.split(';').map((d) => d.trim()).filter(Boolean);
	const find = (name: string) => directives.findIndex((d) => d.split(/\s+/)[0].toLowerCase() === name);
	const img = find('img-src');
	if (img >= 0) {
		const parts = directives[img].split(/\s+/);
		if (parts.includes("'none'")) directives[img] = `img-src ${origin}`;
		else if (!parts.slice(1).includes(origin)) directives[img] = `${directives[img]} ${origin}`;
	} else {
		const def = find('default-src');
		const base = def >= 0 ? directives[def].split(/\s+/).slice(1).filter((s) => s !== "'none'") : [];
		directives.push(['img-src', ...base, origin].join(' '));
	}
	return directives.join('; ');
}
