/**
 * GPX 1.1 (https://www.topografix.com/GPX/1/1/) for a route: the root `gpx` in the GPX 1.1
 * namespace with `version="1.1"` and `creator`; children in the schema's order (metadata, wpt*,
 * rte*); every point has `lat`/`lon` attributes in WGS 84 degrees, and a point's children follow
 * wptType's sequence (time, name, desc, sym, type). Waypoints come in the order given, and the
 * same points form one `rte` so that devices that follow routes get the order too.
 */
export interface GpxPoint {
	lon: number;
	lat: number;
	name: string;
	desc?: string;
	sym?: string;
	type?: string;
}

export interface GpxRoute {
	name: string;
	desc?: string;
	creator: string;
	time?: Date;
	points: readonly GpxPoint[];
}

export const GPX_NS = 'http://www.topografix.com/GPX/1/1';

const escapeXml = (s: string) => s.replace(/[<>&'"]/g, (c) => ({ '<': '&lt;', '>': '&gt;', '&': '&amp;', "'": '&apos;', '"': '&quot;' })[c]!).replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f]/g, '');

// latitudeType: −90 … 90; longitudeType: −180 ≤ lon < 180. Nine decimals is well under a millimetre.
const lat = (v: number) => {
	if (!(v >= -90 && v <= 90)) throw new RangeError(`GPX latitude out of range: ${v}`);
	return String(Number(v.toFixed(9)));
};
const lon = (v: number) => {
	if (!Number.isFinite(v)) throw new RangeError(`GPX longitude is not a number: ${v}`);
	const w = ((((v + 180) % 360) + 360) % 360) - 180;
	return String(Number(w.toFixed(9)));
};

function pointBody(p: GpxPoint, indent: string): string {
	const parts = [`${indent}<name>${escapeXml(p.name)}</name>`];
	if (p.desc) parts.push(`${indent}<desc>${escapeXml(p.desc)}</desc>`);
	if (p.sym) parts.push(`${indent}<sym>${escapeXml(p.sym)}</sym>`);
	if (p.type) parts.push(`${indent}<type>${escapeXml(p.type)}</type>`);
	return parts.join('\n');
}

export function routeGpx(r: GpxRoute): string {
	const out = ['<?xml version="1.0" encoding="UTF-8"?>', `<gpx xmlns="${GPX_NS}" version="1.1" creator="${escapeXml(r.creator)}">`, '  <metadata>', `    <name>${escapeXml(r.name)}</name>`];
	if (r.desc) out.push(`    <desc>${escapeXml(r.desc)}</desc>`);
	if (r.time) out.push(`    <time>${r.time.toISOString()}</time>`);
	out.push('  </metadata>');
	for (const p of r.points) out.push(`  <wpt lat="${lat(p.lat)}" lon="${lon(p.lon)}">`, pointBody(p, '    '), '  </wpt>');
	if (r.points.length) {
		out.push('  <rte>', `    <name>${escapeXml(r.name)}</name>`);
		for (const p of r.points) out.push(`    <rtept lat="${lat(p.lat)}" lon="${lon(p.lon)}">`, pointBody(p, '      '), '    </rtept>');
		out.push('  </rte>');
	}
	out.push('</gpx>', '');
	return out.join('\n');
}
