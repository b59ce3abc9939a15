import { writeArrayBuffer } from 'geotiff';

/** A single-band Float32 GeoTIFF written by the geotiff package's own writer (not our code). */
export function geotiffOf(
	data: number[] | Float32Array,
	width: number,
	height: number,
	geo: { epsg: number; x0: number; y0: number; dx: number; dy: number; nodata?: number }
): ArrayBuffer {
	const projected = geo.epsg !== 4326;
	return writeArrayBuffer(Float32Array.from(data), {
		width,
		height,
		ModelPixelScale: [geo.dx, geo.dy, 0],
		ModelTiepoint: [0, 0, 0, geo.x0, geo.y0, 0],
		GTModelTypeGeoKey: projected ? 1 : 2,
		GTRasterTypeGeoKey: 1,
		...(projected ? { ProjectedCSTypeGeoKey: geo.epsg } : { GeographicTypeGeoKey: geo.epsg }),
		...(geo.nodata !== undefined ? { GDAL_NODATA: String(geo.nodata) } : {})
	});
}
