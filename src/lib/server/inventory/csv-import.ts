/**
 * Sensor inventory from CSV (UTF-8, comma-separated, a header row; a byte-order mark is ignored).
 * Columns: id, serial, type, then either lon, lat (WGS 84 degrees) or x, y, crs (e.g. EPSG:32633),
 * and optionally install_date (YYYY-MM-DD), status (active | faulty | retired; default active)
 * and notes. Header names are matched case-insensitively; unknown columns are refused so that a
 * typo ("latitude") is not silently ignored.
 *
 * Nothing is half-imported: the result is either every row, validated, or the list of problems
 * {row, field, message}, where row is the line of the file as a spreadsheet shows it (header = 1).
 * The caller writes the rows in one transaction.
 */
import Papa from 'papaparse';
import { MAX_IMPORT_ROWS, validateAll, type ImportResult, type RowError } from './sensor-record';

export const CSV_COLUMNS = ['id', 'serial', 'type', 'lon', 'lat', 'x', 'y', 'crs', 'install_date', 'status', 'notes'] as const;
const REQUIRED = ['id', 'serial', 'type'] as const;

export interface SensorImportOptions {
	/** Names of the organisation's sensor types; type cells must match one (case-insensitive). */
	knownTypes: readonly string[];
	/** Default 10 000. */
	maxRows?: number;
}

export function importSensorsCsv(text: string, opts: SensorImportOptions): ImportResult {
	const maxRows = opts.maxRows ?? MAX_IMPORT_ROWS;
	const source = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
	if (source.trim() === '') return { ok: false, errors: [{ row: 0, field: '', message: 'the file is empty' }] };
	const parsed = Papa.parse<string[]>(source, { header: false, skipEmptyLines: 'greedy', delimiter: ',' });
	const errors: RowError[] = [];
	const lines = parsed.data;
	const header = (lines[0] ?? []).map((h) => h.trim().toLowerCase());
	if (header.length === 1 && /[;\t]/.test(header[0])) {
		return { ok: false, errors: [{ row: 1, field: '', message: 'the columns are separated by semicolons or tabs; save the file as comma-separated CSV' }] };
	}
	const known = new Set<string>(CSV_COLUMNS);
	header.forEach((h, i) => {
		if (h === '') errors.push({ row: 1, field: '', message: `column ${i + 1} has no name` });
		else if (!known.has(h)) errors.push({ row: 1, field: h, message: `unknown column "${h}" (expected: ${CSV_COLUMNS.join(', ')})` });
	});
	const seen = new Set<string>();
	for (const h of header) {
		if (h !== '' && seen.has(h)) errors.push({ row: 1, field: h, message: `column "${h}" appears twice` });
		seen.add(h);
	}
	for (const r of REQUIRED) if (!seen.has(r)) errors.push({ row: 1, field: r, message: `the required column "${r}" is missing` });
	if (!(seen.has('lon') && seen.has('lat')) && !(seen.has('x') && seen.has('y') && seen.has('crs'))) {
		errors.push({ row: 1, field: 'lon', message: 'position columns are missing: lon and lat, or x, y and crs' });
	}
	if (errors.length) return { ok: false, errors };
	if (lines.length - 1 > maxRows) {
		return { ok: false, errors: [{ row: 0, field: '', message: `the file has ${lines.length - 1} rows; at most ${maxRows} can be imported at once` }] };
	}
	if (lines.length === 1) return { ok: false, errors: [{ row: 0, field: '', message: 'the file has a header but no sensors' }] };

	// Line numbers: skipEmptyLines drops blank lines, so recover each record's line from the text.
	const lineOf = recordLines(source, lines.length);
	// Papa reports quoting problems by record index (0 = the header line).
	for (const e of parsed.errors) {
		if (e.type === 'Quotes') errors.push({ row: lineOf[e.row ?? 0] ?? (e.row ?? 0) + 1, field: '', message: `malformed quotes: ${e.message}` });
	}
	const records: { row: number; raw: Record<string, unknown> }[] = [];
	for (let i = 1; i < lines.length; i++) {
		const cells = lines[i];
		const row = lineOf[i];
		if (cells.length !== header.length) {
			errors.push({ row, field: '', message: `expected ${header.length} cells, found ${cells.length}` });
			continue;
		}
		const raw: Record<string, unknown> = {};
		header.forEach((h, k) => (raw[h] = cells[k]));
		records.push({ row, raw });
	}
	const result = validateAll(records, opts.knownTypes);
	if (errors.length) return { ok: false, errors: [...errors, ...(result.ok ? [] : result.errors)].sort((a, b) => a.row - b.row) };
	return result;
}

/**
 * Line number (1-based) of each parsed record. Without blank lines record i sits on line i + 1;
 * quoted cells may span lines, so the lines are counted by re-parsing record by record.
 */
function recordLines(source: string, count: number): number[] {
	const out: number[] = [];
	let line = 1;
	let i = 0;
	let k = 0;
	const n = source.length;
	while (k < count && i <= n) {
		// skip blank lines (as skipEmptyLines: 'greedy' does)
		let j = i;
		while (j < n && (source[j] === ' ' || source[j] === '\t' || source[j] === ',')) j++;
		if (j >= n || source[j] === '\n' || source[j] === '\r') {
			if (j >= n) break;
			i = j + (source[j] === '\r' && source[j + 1] === '\n' ? 2 : 1);
			line++;
			continue;
		}
		out.push(line);
		k++;
		// advance to the end of this record, honouring quotes
		let quoted = false;
		while (i < n) {
			const ch = source[i];
			if (ch === '"') quoted = !quoted;
			else if (!quoted && (ch === '\n' || ch === '\r')) break;
			else if (quoted && ch === '\n') line++;
			i++;
		}
		if (i < n) {
			i += source[i] === '\r' && source[i + 1] === '\n' ? 2 : 1;
			line++;
		} else break;
	}
	while (out.length < count) out.push(out.length + 1);
	return out;
}
