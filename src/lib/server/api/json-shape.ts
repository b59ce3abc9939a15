/**
 * A service view in the shape our JSON API sends it (dates as ISO strings, no undefined members),
 * for a page load that calls the service the API uses instead of fetching its own API (an internal
 * fetch would run the hooks, the session and the actor, a second time for the page).
 */
export function asApiJson<T>(view: unknown): T {
	return JSON.parse(JSON.stringify(view)) as T;
}
