/**
 * Nearest-neighbour resampling of a band onto another grid in the same CRS: each target cell takes
 * the value of the source cell that contains the target cell's centre; target cells whose centre
 * falls outside the source, or on a source cell without data, get nodata (NaN).
 *
 * Grids in different CRSs are refused with a clear message: reprojection belongs to the server
 * (the caller reprojects the layer to the network's working CRS before alignment).
 */
import { ImportanceError, isValidValue, type GridBand, type GridSpec } from './grid';

export function alignToGrid(band: GridBand, target: GridSpec): GridBand {
	const src = band.grid;
	if (src.epsg !== target.epsg) {
		throw new ImportanceError(`Cannot align a layer in EPSG:${src.epsg} to a grid in EPSG:${target.epsg}: reproject it to EPSG:${target.epsg} first`);
	}
	if (band.data.length !== src.width * src.height) {
		throw new ImportanceError(`Band has ${band.data.length} values but its grid is ${src.width}×${src.height}`);
	}
	const out = new Float64Array(target.width * target.height);
	const cols = new Int32Array(target.width);
	for (let c = 0; c < target.width; c++) {
		const x = target.x0 + (c + 0.5) * target.dx;
		const sc = Math.floor((x - src.x0) / src.dx);
		cols[c] = sc >= 0 && sc < src.width ? sc : -1;
	}
	for (let r = 0; r < target.height; r++) {
		const y = target.y0 - (r + 0.5) * target.dy;
		const sr = Math.floor((src.y0 - y) / src.dy);
		const rowOk = sr >= 0 && sr < src.height;
		for (let c = 0; c < target.width; c++) {
			const sc = cols[c];
			const i = r * target.width + c;
			if (!rowOk || sc < 0) {
				out[i] = NaN;
				continue;
			}
			const v = band.data[sr * src.width + sc];
			out[i] = isValidValue(v, band.nodata) ? v : NaN;
		}
	}
	return { grid: { ...target }, data: out, nodata: null };
}
