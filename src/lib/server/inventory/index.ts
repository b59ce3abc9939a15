export { SENSOR_STATUSES, MAX_IMPORT_ROWS, type SensorStatus, type SensorRecord, type RowError, type ImportResult } from './sensor-record';
export { importSensorsCsv, CSV_COLUMNS, type SensorImportOptions } from './csv-import';
export { importSensorsGeoJson } from './geojson-import';
export { exportSensorsCsv, exportSensorsGeoJson, csvTextCell, EXPORT_COLUMNS, type SensorFeature, type SensorFeatureCollection } from './export';
