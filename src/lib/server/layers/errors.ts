/** Why an uploaded layer was refused. */
export type LayerRejectedCode =
	| 'not-tiff'
	| 'no-georeferencing'
	| 'unknown-crs'
	| 'all-nodata'
	| 'band-missing'
	| 'too-large'
	| 'corrupt'
	| 'unsupported'
	| 'rotated'
	| 'unsafe-blocks';

/** An upload that cannot become a layer. `message` is a full sentence for the user. */
export class LayerRejected extends Error {
	constructor(
		public readonly code: LayerRejectedCode,
		message: string
	) {
		super(message);
		this.name = 'LayerRejected';
	}
}
