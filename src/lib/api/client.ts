/**
 * A small typed client for Cairnfield's own JSON API (/api/v1). Pages and scripts use it instead
 * of hand-written fetch calls. Pass SvelteKit's `fetch` in load functions.
 */
export interface ApiErrorBody {
	error: { code: string; message: string; fields?: Record<string, string> };
}

export class ApiClientError extends Error {
	constructor(
		public status: number,
		public code: string,
		message: string,
		public fields?: Record<string, string>
	) {
		super(message);
	}
}

export interface Network {
	id: number;
	organisationId: number;
	slug: string;
	name: string;
	description: string;
	crsEpsg: number | null;
	studyArea: unknown | null;
	exclusions: unknown | null;
	publication: 'private' | 'published';
	publicText: string;
	version: number;
	createdAt: string;
	updatedAt: string;
}

export interface NetworkPatch {
	version: number;
	name?: string;
	slug?: string;
	description?: string;
	crsEpsg?: number | null;
	publicText?: string;
	publication?: 'private' | 'published';
}

type Fetch = typeof fetch;

export function createApiClient(fetchFn: Fetch = fetch, base = '/api/v1') {
	async function call<T>(method: string, path: string, body?: unknown): Promise<T> {
		const res = await fetchFn(`${base}${path}`, {
			method,
			headers: body === undefined ? { accept: 'application/json' } : { accept: 'application/json', 'content-type': 'application/json' },
			body: body === undefined ? undefined : JSON.stringify(body)
		});
		const text = await res.text();
		const data = text ? JSON.parse(text) : null;
		if (!res.ok) {
			const e = (data as ApiErrorBody | null)?.error;
			throw new ApiClientError(res.status, e?.code ?? 'http_error', e?.message ?? res.statusText, e?.fields);
		}
		return data as T;
	}
	return {
		listNetworks: () => call<{ networks: Network[] }>('GET', '/networks').then((r) => r.networks),
		getNetwork: (id: number) => call<{ network: Network }>('GET', `/networks/${id}`).then((r) => r.network),
		createNetwork: (input: { name: string; description?: string; crsEpsg?: number | null; publicText?: string }) =>
			call<{ network: Network }>('POST', '/networks', input).then((r) => r.network),
		updateNetwork: (id: number, patch: NetworkPatch) => call<{ network: Network }>('POST', `/networks/${id}`, patch).then((r) => r.network),
		call
	};
}

export type ApiClient = ReturnType<typeof createApiClient>;
