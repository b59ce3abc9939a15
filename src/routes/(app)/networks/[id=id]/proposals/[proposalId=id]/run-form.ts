/** The run form's fields as the run API's input: numbers from text, empty fields left out. */
const NUMBER_FIELDS = ['recipeVersionId', 'addCount', 'addTypeId', 'maxIterations', 'tolerance', 'minSpacing', 'maxTravel', 'cellSize'] as const;

export const RUN_FORM_ECHO = ['strategy', ...NUMBER_FIELDS, 'zoneSetId'] as const;

export function runFormInput(data: FormData): { input: Record<string, unknown>; values: Record<string, string> } {
	const input: Record<string, unknown> = {};
	const values: Record<string, string> = {};
	const strategy = data.get('strategy');
	if (typeof strategy === 'string') input.strategy = values.strategy = strategy;
	for (const name of NUMBER_FIELDS) {
		const v = data.get(name);
		if (typeof v !== 'string' || v.trim() === '') continue;
		values[name] = v;
		input[name] = Number(v.trim());
	}
	const zone = data.get('zoneSetId');
	if (typeof zone === 'string') {
		values.zoneSetId = zone;
		input.zoneSetId = zone === 'none' ? null : zone === '' ? undefined : Number(zone);
	}
	if (data.get('sensorsChosen') === '1') input.sensorIds = data.getAll('sensorIds').map((v) => Number(v));
	return { input, values };
}
