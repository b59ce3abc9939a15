import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import config from '../../../tailwind.config';

const srcDir = path.resolve(import.meta.dirname, '../../../src');
const palette = config.theme.extend.colors as Record<string, string | Record<string, string>>;

function sourceFiles(dir: string): string[] {
	const out: string[] = [];
	for (const f of readdirSync(dir)) {
		const p = path.join(dir, f);
		if (statSync(p).isDirectory()) out.push(...sourceFiles(p));
		else if (/\.(svelte|ts|js|css|html)$/.test(f)) out.push(p);
	}
	return out;
}

/** Colour utilities that take a palette shade (Tailwind's colour-taking prefixes). */
const PREFIXES = ['text', 'bg', 'border', 'border-[xytrbl]', 'ring', 'ring-offset', 'outline', 'fill', 'stroke', 'from', 'via', 'to', 'divide', 'decoration', 'placeholder', 'accent', 'caret', 'shadow'];

/**
 * Every `utility-name-shade` class in the source whose name is one of our palette's colours, with
 * where it was found. Tailwind writes no CSS for a shade the palette lacks, silently.
 */
function paletteClasses(sources: { file: string; text: string }[], names: string[]): { cls: string; name: string; shade: string; file: string }[] {
	const re = new RegExp(`(?<![\\w-])(?:${PREFIXES.join('|')})-(${names.join('|')})-(\\d{2,3})(?![\\w-])`, 'g');
	const found: { cls: string; name: string; shade: string; file: string }[] = [];
	for (const { file, text } of sources) for (const m of text.matchAll(re)) found.push({ cls: m[0], name: m[1], shade: m[2], file });
	return found;
}

describe('palette classes', () => {
	const scales = Object.entries(palette).filter((e): e is [string, Record<string, string>] => typeof e[1] === 'object');
	const names = scales.map(([n]) => n);
	const shades = Object.fromEntries(scales);
	const used = paletteClasses(sourceFiles(srcDir).map((f) => ({ file: path.relative(srcDir, f), text: readFileSync(f, 'utf8') })), names);

	it('finds the palette classes the pages use (the scan itself works)', () => {
		// A scan that finds nothing would pass the check below vacuously.
		expect(used.length).toBeGreaterThan(100);
		expect(used.some((u) => u.cls === 'text-peat-600')).toBe(true);
	});

	it('every palette class used in src/ names a shade the palette defines', () => {
		const missing = used.filter((u) => !(u.shade in shades[u.name])).map((u) => `${u.cls} (${u.file})`);
		expect([...new Set(missing)]).toEqual([]);
	});

	it('recognises a missing shade, with a variant prefix, and passes a defined one', () => {
		const probe = paletteClasses([{ file: 'probe.svelte', text: '<p class="hover:text-peat-650 bg-fell-500 my-text-peat-600x">x</p>' }], names);
		expect(probe.map((u) => `${u.cls}:${u.shade in shades[u.name]}`)).toEqual(['text-peat-650:false', 'bg-fell-500:true']);
	});
});
