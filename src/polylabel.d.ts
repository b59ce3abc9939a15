/** polylabel 2 ships without types: the pole of inaccessibility of a polygon (rings of [x, y]). */
declare module 'polylabel' {
	export default function polylabel(polygon: number[][][], precision?: number, debug?: boolean): [number, number] & { distance: number };
}
