export { LayerRejected, type LayerRejectedCode } from './errors';
export { bandStats, bandHistogram, BandSummary, HISTOGRAM_BINS, EXACT_HISTOGRAM_VALUES, FINE_BINS, type BandStats, type Histogram } from './stats';
export { inspectLayer, loadLayer, processLayer, toGridBand, DEFAULT_MAX_PIXELS, type InspectOptions, type LayerMetadata, type InspectedLayer, type LonLatPolygon, type ProcessOptions, type ProcessedLayer } from './inspect';
export { renderPreview, previewFromValues, PreviewAccumulator, downsample, previewSize, PREVIEW_MAX_SIZE, type Preview, type PreviewOptions, type PreviewSource } from './preview';
export { legendStops, rampColour, rampStops, RAMP_NAMES, type RampName, type LegendStop } from '../../importance/colour-ramp';
export { reprojectToGrid, type ReprojectOptions } from './reproject';
export { processStoredLayer, processLayerInWorker, DEFAULT_DECODE_HEAP_MB, type DecodeLimits } from './decode';
