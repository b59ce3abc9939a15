import { describe, expect, it } from 'vitest';
import { formatLonLat, formatMetres, formatShare, sensorSymbolSvg, SHAPES, typeStyle } from '../../../src/lib/components/map/symbols';

describe('map symbols', () => {
	it('typeStyle gives the first four types four different shapes, then repeats with another colour', () => {
		const first = [0, 1, 2, 3].map(typeStyle);
		expect(new Set(first.map((s) => s.shape)).size).toBe(4);
		expect(first.map((s) => s.shape)).toEqual([...SHAPES]);
		expect(typeStyle(4).shape).toBe('circle');
		expect(typeStyle(4).colour).not.toBe(typeStyle(0).colour);
		expect(() => typeStyle(-1)).toThrow(RangeError);
		expect(() => typeStyle(1.5)).toThrow(RangeError);
	});

	it('sensorSymbolSvg tells the statuses apart by fill and outline, not only colour', () => {
		const style = typeStyle(1);
		const active = sensorSymbolSvg(style, 'active');
		const faulty = sensorSymbolSvg(style, 'faulty');
		const retired = sensorSymbolSvg(style, 'retired');
		expect(active).toContain(`fill="${style.colour}"`);
		expect(faulty).toContain('fill="#ffffff"');
		expect(faulty).toContain('<path'); // the cross
		expect(retired).toContain('stroke-dasharray');
		expect(retired).not.toContain(style.colour);
		expect(sensorSymbolSvg(typeStyle(2), 'active')).toContain('<polygon points="10,2.5');
		expect(sensorSymbolSvg(typeStyle(0), 'active', 24)).toContain('width="24"');
	});

	it('formatters', () => {
		expect(formatLonLat(-3.1883, 55.9533)).toBe('lon 3.18830° W, lat 55.95330° N');
		expect(formatLonLat(10.1, -0.5)).toBe('lon 10.10000° E, lat 0.50000° S');
		expect(formatLonLat(143.4853531, -32.1376472, 6)).toBe('lon 143.485353° E, lat 32.137647° S');
		expect(formatMetres(5864732.4)).toBe('5\u2009864\u2009732');
		expect(formatMetres(512)).toBe('512');
		expect(formatShare(0.256)).toBe('25.6 %');
		expect(formatShare(null)).toBe('—');
	});
});
