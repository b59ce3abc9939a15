/**
 * A task update form (the route page's Start, Done, Blocked) as the body of
 * POST /api/v1/networks/{id}/tasks/{taskId}/updates. The server action and the offline queue both
 * use it, so an update that failed half-way online and is sent again from the queue under the same
 * Idempotency-Key has the same body, and the server replays it instead of applying it twice.
 */
export interface UpdateBody {
	state: string;
	fromState?: string;
	position?: { lon?: number; lat?: number; accuracyM?: number };
	note?: string;
	reason?: string;
}

const num = (v: FormDataEntryValue | null) => {
	const s = typeof v === 'string' ? v.trim().replace(',', '.') : '';
	return s === '' ? undefined : Number(s);
};
const text = (v: FormDataEntryValue | null) => (typeof v === 'string' && v.trim() !== '' ? v.trim() : undefined);

export function updateFromForm(data: FormData): { taskId: number; key: string; body: UpdateBody } {
	const lon = num(data.get('lon'));
	const lat = num(data.get('lat'));
	const accuracyM = num(data.get('accuracyM'));
	const body: UpdateBody = { state: String(data.get('state') ?? '') };
	const fromState = text(data.get('fromState'));
	if (fromState) body.fromState = fromState;
	if (lon !== undefined || lat !== undefined) body.position = { lon, lat, ...(accuracyM !== undefined ? { accuracyM } : {}) };
	const note = text(data.get('note'));
	if (note) body.note = note;
	const reason = text(data.get('reason'));
	if (reason) body.reason = reason;
	return { taskId: Number(data.get('taskId')), key: String(data.get('key') ?? ''), body };
}
