/**
 * The structural rules of the GPX 1.1 schema (https://www.topografix.com/GPX/1/1/gpx.xsd) that a
 * route file must satisfy, checked on a parsed document; returns the broken rules (empty = valid).
 * Rules from the schema: the root `gpx` in namespace http://www.topografix.com/GPX/1/1 with the
 * required attributes version="1.1" and creator; gpxType's sequence metadata?, wpt*, rte*, trk*,
 * extensions?; metadataType's sequence name, desc, author, copyright, link, time, keywords, bounds,
 * extensions; wptType's required lat (−90…90) and lon (−180 ≤ lon < 180) and its element sequence;
 * rteType's sequence name, cmt, desc, src, link*, number, type, extensions, rtept*.
 */
import { DOMParser, type Element } from '@xmldom/xmldom';

export const GPX_NS = 'http://www.topografix.com/GPX/1/1';
const GPX_ORDER = ['metadata', 'wpt', 'rte', 'trk', 'extensions'];
const METADATA_ORDER = ['name', 'desc', 'author', 'copyright', 'link', 'time', 'keywords', 'bounds', 'extensions'];
const WPT_ORDER = ['ele', 'time', 'magvar', 'geoidheight', 'name', 'cmt', 'desc', 'src', 'link', 'sym', 'type', 'fix', 'sat', 'hdop', 'vdop', 'pdop', 'ageofdgpsdata', 'dgpsid', 'extensions'];
const RTE_ORDER = ['name', 'cmt', 'desc', 'src', 'link', 'number', 'type', 'extensions', 'rtept'];
const REPEATABLE = new Set(['wpt', 'rte', 'trk', 'link', 'rtept']);

function children(e: Element): Element[] {
	const out: Element[] = [];
	for (let n = e.firstChild; n; n = n.nextSibling) if (n.nodeType === 1) out.push(n as unknown as Element);
	return out;
}

function checkSequence(e: Element, order: string[], where: string, broken: string[]): void {
	let last = -1;
	const seen = new Set<string>();
	for (const c of children(e)) {
		if (c.namespaceURI !== GPX_NS) broken.push(`${where}: <${c.tagName}> is not in the GPX 1.1 namespace`);
		const k = order.indexOf(c.localName!);
		if (k < 0) broken.push(`${where}: <${c.localName}> is not allowed here`);
		else if (k < last) broken.push(`${where}: <${c.localName}> comes after <${order[last]}>`);
		else if (k === last && !REPEATABLE.has(c.localName!)) broken.push(`${where}: <${c.localName}> appears twice`);
		if (k >= 0) last = k;
		seen.add(c.localName!);
	}
}

function checkPoint(p: Element, where: string, broken: string[]): { lat: number; lon: number } {
	const lat = Number(p.getAttribute('lat'));
	const lon = Number(p.getAttribute('lon'));
	if (!p.hasAttribute('lat') || !(lat >= -90 && lat <= 90)) broken.push(`${where}: lat missing or outside −90…90`);
	if (!p.hasAttribute('lon') || !(lon >= -180 && lon < 180)) broken.push(`${where}: lon missing or outside −180…180`);
	checkSequence(p, WPT_ORDER, where, broken);
	return { lat, lon };
}

export interface GpxCheck {
	broken: string[];
	waypoints: { lat: number; lon: number; name: string; desc: string }[];
	routePoints: { lat: number; lon: number; name: string }[];
}

export function checkGpx(xml: string): GpxCheck {
	const broken: string[] = [];
	const doc = new DOMParser({ onError: (level, msg) => (level !== 'warning' ? broken.push(`XML ${level}: ${msg}`) : undefined) }).parseFromString(xml, 'application/xml');
	const root = doc.documentElement as unknown as Element | null;
	if (!root) return { broken: ['no root element'], waypoints: [], routePoints: [] };
	if (root.localName !== 'gpx' || root.namespaceURI !== GPX_NS) broken.push(`root is <${root.tagName}> in ${root.namespaceURI}, not <gpx> in ${GPX_NS}`);
	if (root.getAttribute('version') !== '1.1') broken.push('version must be "1.1"');
	if (!root.getAttribute('creator')) broken.push('creator is required');
	checkSequence(root, GPX_ORDER, 'gpx', broken);
	const text = (e: Element, name: string) => children(e).find((c) => c.localName === name)?.textContent ?? '';
	const waypoints = [];
	const routePoints = [];
	for (const c of children(root)) {
		if (c.localName === 'metadata') checkSequence(c, METADATA_ORDER, 'metadata', broken);
		if (c.localName === 'wpt') waypoints.push({ ...checkPoint(c, `wpt ${waypoints.length + 1}`, broken), name: text(c, 'name'), desc: text(c, 'desc') });
		if (c.localName === 'rte') {
			checkSequence(c, RTE_ORDER, 'rte', broken);
			for (const p of children(c).filter((x) => x.localName === 'rtept')) routePoints.push({ ...checkPoint(p, `rtept ${routePoints.length + 1}`, broken), name: text(p, 'name') });
		}
	}
	return { broken, waypoints, routePoints };
}
